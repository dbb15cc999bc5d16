// Readers for the field-check reference files in test/fixtures/field/ (made by
// tools/crosscheck/field-reference.R with R 4.2.2 glm and sandwich 3.0-2; see the README there).
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { numberColumn, readFixtureTable, tableValue } from './glm-fixtures.js';

const results = readFixtureTable('field', 'field_r.csv');

/** One value of field_r.csv: dataset (`rounds` or `attempts`), model, quantity, term (R's name). */
export function fieldValue(dataset: string, model: string, quantity: string, term = ''): number {
  return tableValue(results, 'field_r.csv', dataset, model, quantity, term);
}

/** The path of a file in test/fixtures/field/. */
export function fieldFixture(file: string): string {
  return fileURLToPath(new URL(`../fixtures/field/${file}`, import.meta.url));
}

/** The text of a file in test/fixtures/field/. */
export function fieldFixtureText(file: string): string {
  return readFileSync(fieldFixture(file), 'utf8');
}

/** The per-round telemetry as columns, with the reference model's linear predictor (its coefficients are field-model.json's). */
export function liveRounds() {
  const table = readFixtureTable('field', 'live-rounds.csv');
  const player = table.rows.map((row) => row[0] as string);
  const latency = numberColumn(table, 'latency_ms');
  const scale = numberColumn(table, 'scale');
  const veteran = table.rows.map((row) => (row[3] === 'veteran' ? 1 : 0));
  const hits = numberColumn(table, 'hits');
  const attempts = numberColumn(table, 'attempts');
  // field-model.json: 0.9 - 0.008 L + 1.6 log s - 0.5 [veteran] + 0.004 L log s
  const linearPredictor = latency.map((value, i) => {
    const logScale = Math.log(scale[i] as number);
    return 0.9 - 0.008 * value + 1.6 * logScale - 0.5 * (veteran[i] as number) + 0.004 * value * logScale;
  });
  const ids = [...new Set(player)];
  const cluster = player.map((id) => ids.indexOf(id));
  return { player, cluster, latency, scale, veteran, hits, attempts, linearPredictor };
}
