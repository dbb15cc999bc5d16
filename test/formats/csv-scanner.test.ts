/**
 * The byte-level CSV scanner against csv-parse (a general-purpose, well-kept
 * CSV parser from the npm registry, used here as the outside reference): on
 * generated well-formed CSV — quoted fields with delimiters, doubled quotes
 * and line breaks, CRLF or LF line ends, a byte-order mark, empty lines — both
 * read the same records, fed in chunks of any size. The product reads with the
 * scanner because csv-parse costs about a second per million rows here, more
 * than the whole time budget of issue 3 (see DEVELOPERS.md).
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { parse } from 'csv-parse/sync';
import { CsvScanner } from '../../src/formats/csv-scanner.js';

function scan(text: string, delimiter: ',' | ';' | '\t', chunkSize: number): string[][] {
  const records: string[][] = [];
  const scanner = new CsvScanner('t.csv', delimiter, (record) => {
    records.push(record.texts());
    return true;
  });
  const bytes = Buffer.from(text, 'utf8');
  for (let start = 0; start < bytes.length; start += chunkSize) scanner.push(bytes.subarray(start, start + chunkSize));
  scanner.end();
  expect(scanner.failure).toBeUndefined();
  return records;
}

function quote(field: string, delimiter: string): string {
  return /["\r\n]/.test(field) || field.includes(delimiter) || field === '' ? `"${field.replace(/"/g, '""')}"` : field;
}

describe('CsvScanner', () => {
  it('reads the same records as csv-parse on generated CSV (fast-check, 500 runs, seed 17)', () => {
    const field = fc.oneof(
      fc.string({ maxLength: 8 }),
      fc.constantFrom('a,b', 'say "hi"', 'two\nlines', 'cr\r\nlf', ';', '\t', 'ünïcödé', '12.5', '-3e2'),
    );
    fc.assert(
      fc.property(
        fc.constantFrom(',', ';', '\t'),
        fc.array(fc.array(field, { minLength: 1, maxLength: 6 }), { minLength: 1, maxLength: 8 }),
        fc.constantFrom('\n', '\r\n'),
        fc.boolean(),
        fc.boolean(),
        fc.integer({ min: 1, max: 64 }),
        (delimiter, rows, newline, bom, trailingNewline, chunkSize) => {
          const lines = rows.map((row) => row.map((cell) => quote(cell, delimiter)).join(delimiter));
          const text = `${bom ? '\uFEFF' : ''}${lines.join(newline)}${trailingNewline ? newline : ''}`;
          const reference = parse(text, { bom: true, delimiter, relax_column_count: true, skip_empty_lines: true }) as string[][];
          expect(scan(text, delimiter, chunkSize)).toEqual(reference);
        },
      ),
      { seed: 17, numRuns: 500 },
    );
  });
});
