// Readers for the reference CSVs copied into test/fixtures/glm/ (sources in its README); the
// folder-taking forms serve the other fixture folders (field/).
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export interface Table {
  readonly header: readonly string[];
  readonly rows: readonly (readonly string[])[];
}

/** Parse a plain CSV fixture of test/fixtures/glm/ (header line, no quoting). */
export function readTable(file: string): Table {
  return readFixtureTable('glm', file);
}

/** Parse a plain CSV fixture of test/fixtures/<folder>/ (header line, no quoting). */
export function readFixtureTable(folder: string, file: string): Table {
  const text = readFileSync(fileURLToPath(new URL(`../fixtures/${folder}/${file}`, import.meta.url)), 'utf8');
  const lines = text.split(/\r?\n/).filter((line) => line.trim() !== '');
  const [headerLine, ...rest] = lines;
  if (headerLine === undefined) throw new Error(`${file} is empty`);
  return { header: headerLine.split(','), rows: rest.map((line) => line.split(',')) };
}

/** One column of a table as numbers (rows whose value is NA are skipped when `skipMissing`). */
export function numberColumn(table: Table, name: string): number[] {
  const index = table.header.indexOf(name);
  if (index < 0) throw new Error(`no column ${name}`);
  return table.rows.map((row) => Number(row[index]));
}

/** One value from a long-format result file: dataset,model,quantity,term,value. */
export function referenceValue(file: string, dataset: string, model: string, quantity: string, term = ''): number {
  return tableValue(readTable(file), file, dataset, model, quantity, term);
}

/** One value from a long-format result table already read (`file` names it in errors). */
export function tableValue(table: Table, file: string, dataset: string, model: string, quantity: string, term = ''): number {
  const hits = table.rows.filter(
    (row) => row[0] === dataset && row[1] === model && row[2] === quantity && (row[3] ?? '') === term,
  );
  const hit = hits[0];
  if (hits.length !== 1 || hit === undefined) {
    throw new Error(`${file}: expected one row ${dataset},${model},${quantity},${term}, found ${hits.length}`);
  }
  return Number(hit[4]);
}

/** A certified NIST value: dataset,quantity,term,value (NIST's own notation, e.g. 0.3E-01). */
export function certifiedValue(dataset: string, quantity: string, term = ''): number {
  const table = readTable('nist_certified.csv');
  const hit = table.rows.find((row) => row[0] === dataset && row[1] === quantity && (row[2] ?? '') === term);
  if (hit === undefined) throw new Error(`no certified ${dataset} ${quantity} ${term}`);
  return Number(hit[3]);
}

/** |actual - expected| / |expected|. */
export function relativeError(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}
