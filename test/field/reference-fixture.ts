// The field check run on the R reference fixture (test/fixtures/field/, see its README).
import { readFileSync } from 'node:fs';
import { checkField, type FieldCheckOptions } from '../../src/field/check-field.js';
import type { FieldCheckReport } from '../../src/field/field-types.js';
import { readGroupedTrialsFile } from '../../src/io/read-trials.js';
import { type CompiledModel, compileModel } from '../../src/model/compile.js';
import { fieldFixture } from '../helpers/field-fixtures.js';

export function fixtureModel(): CompiledModel {
  const compiled = compileModel(JSON.parse(readFileSync(fieldFixture('field-model.json'), 'utf8')), 'field-model.json');
  if (!compiled.ok) throw new Error(compiled.issues.map((issue) => issue.message).join('; '));
  return compiled.value;
}

/** checkField on live-rounds.csv or live-attempts.csv with the fixture model. */
export async function fixtureReport(file: 'live-rounds.csv' | 'live-attempts.csv', options: FieldCheckOptions = {}): Promise<FieldCheckReport> {
  const read = await readGroupedTrialsFile(fieldFixture(file));
  if (!read.ok) throw new Error(read.issues.map((issue) => issue.message).join('; '));
  const report = checkField(read.value, fixtureModel(), options);
  if (!report.ok) throw new Error(report.issues.map((issue) => issue.message).join('; '));
  return report.value;
}
