import { describe, expect, it } from 'vitest';
import { checkField } from '../../src/field/check-field.js';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Issue } from '../../src/issues.js';
import { compileModel } from '../../src/model/compile.js';
import { defaultRules } from '../../src/solver/rules.js';
import { fieldFixtureText } from '../helpers/field-fixtures.js';
import { fixtureModel, fixtureReport } from './reference-fixture.js';

const model = fixtureModel();
const liveText = fieldFixtureText('live-rounds.csv');

function trialsOf(text: string, file = 'live.csv') {
  const parsed = parseTrialsCsv(text, file);
  if (!parsed.ok) throw new Error(parsed.issues.map((issue) => issue.message).join('; '));
  return parsed.value;
}

/** The fixture's rows with each line passed through `edit` (header untouched). */
function editedLive(edit: (fields: string[], index: number) => string[] | null): string {
  const [header, ...rows] = liveText.trim().split('\n');
  const kept = rows.flatMap((line, index) => {
    const edited = edit(line.split(','), index);
    return edited === null ? [] : [edited.join(',')];
  });
  return `${header}\n${kept.join('\n')}\n`;
}

function codes(issues: readonly Issue[]): string[] {
  return issues.map((issue) => issue.code);
}

describe('checkField()', () => {
  it('reports every number finite or null, and the verdict with its message and caution', async () => {
    const report = await fixtureReport('live-rounds.csv');
    const numbers: number[] = [];
    JSON.stringify(report, (_key, value: unknown) => {
      if (typeof value === 'number') numbers.push(value);
      return value;
    });
    expect(numbers.every(Number.isFinite)).toBe(true);
    expect(report.verdict).toBe('under_compensates'); // the fixture's truth is 25% steeper in latency
    expect(report.summary[0]).toContain('Compensation falls short');
    expect(report.caution).toContain("league's own rules and officials decide");
    expect(report.summary.at(-1)).toBe(report.caution);
  });

  it('names the players who never had a scale above 1 as the control', () => {
    // Players p01-p10 play unscaled: the control.
    const text = editedLive((fields) => (Number(fields[0]?.slice(1)) <= 10 ? [fields[0] as string, fields[1] as string, '1', ...fields.slice(3)] : fields));
    const report = checkField(trialsOf(text), model);
    if (!report.ok) throw new Error('not checked');
    expect(report.value.data.control.players).toBe(10);
    expect(report.value.data.compensated.players).toBe(38);
    expect(report.value.summary.some((line) => line.startsWith('Control: 10 players never had a scale above 1'))).toBe(true);
    expect(report.value.bands.reduce((sum, band) => sum + band.control_players, 0)).toBeGreaterThanOrEqual(10);
  });

  it('says "nothing was compensated" when every scale is 1', () => {
    const report = checkField(trialsOf(editedLive((fields) => [fields[0] as string, fields[1] as string, '1', ...fields.slice(3)])), model);
    if (!report.ok) throw new Error('not checked');
    expect(report.value.verdict).toBe('nothing_compensated');
    expect(report.value.passed).toBe(false);
    expect(report.value.compensation.message).toMatch(/^Nothing was compensated: no scale in the file is above 1/);
  });

  it('warns when live latencies lie outside the model\'s training range, as the solver does', () => {
    const text = editedLive((fields, index) => (index < 20 ? [fields[0] as string, '300', ...fields.slice(2)] : fields));
    const report = checkField(trialsOf(text), model);
    if (!report.ok) throw new Error('not checked');
    const warning = report.warnings.find((issue) => issue.code === 'outside_training_range');
    expect(warning?.location).toBe('live.csv:latency_ms');
    expect(warning?.message).toContain('training range 5-250 ms, got 300-300 ms outside it');
  });

  it('warns, naming the file, column and value, when scales are below the rules\' floor', () => {
    const text = editedLive((fields, index) => (index === 3 ? [fields[0] as string, fields[1] as string, '0.9', ...fields.slice(3)] : fields));
    const report = checkField(trialsOf(text), model, { rules: defaultRules({ scale_floor: 1, scale_cap: 2 }) });
    if (!report.ok) throw new Error('not checked');
    const warning = report.warnings.find((issue) => issue.code === 'scale_below_floor');
    expect(warning?.location).toBe('live.csv:scale');
    expect(warning?.message).toContain("`scale` requires at least the rules' `scale_floor` 1, got 0.9");
  });

  it('warns about bands with no rows and leaves them out', async () => {
    const report = await fixtureReport('live-rounds.csv', { bands: [40, 80, 120, 160, 200, 300, 400] });
    expect(report.bands.at(-1)?.observed).toBeNull();
    const warning = (report.warnings as Issue[]).find((issue) => issue.code === 'empty_band');
    expect(warning?.message).toContain('got none in 300-400 ms, 400+ ms');
  });

  it('compares the band of the rules\' reference latency, or their fixed target', async () => {
    const atReference = await fixtureReport('live-rounds.csv', { rules: defaultRules({ target: { kind: 'reference_latency', latency_ms: 60 } }) });
    expect(atReference.compensation.reference_band).toBe(1);
    const fixed = await fixtureReport('live-rounds.csv', { rules: defaultRules({ target: { kind: 'fixed', probability: 0.6 } }) });
    expect(fixed.compensation.reference_band).toBeNull();
    const worst = fixed.bands[fixed.compensation.worst_band ?? 0];
    expect(worst?.gap?.estimate).toBeCloseTo((fixed.compensation.gap?.estimate ?? 0), 12);
  });

  it('adds the rules\' latency limit as a cut and leaves the bands above it out of the verdict', async () => {
    const report = await fixtureReport('live-rounds.csv', { bands: [40, 80, 120], rules: defaultRules({ latency_limit_ms: 150 }) });
    expect(report.settings.band_cuts_ms).toEqual([40, 80, 120, 150]);
    expect(report.bands.at(-1)?.eligible).toBe(false);
    expect(report.compensation.worst_band).toBe(3);
  });

  it('gives a band of one player no interval and keeps it out of the fit and the residual trend', () => {
    // One round of p01 alone above 250 ms (a regression: its one cluster once made the trend degenerate).
    const text = editedLive((fields, index) => (index === 0 ? [fields[0] as string, '260', ...fields.slice(2)] : fields));
    const report = checkField(trialsOf(text), model, { bands: [40, 80, 120, 160, 200, 250] });
    if (!report.ok) throw new Error('not checked');
    const lonely = report.value.bands.at(-1);
    expect(lonely?.players).toBe(1);
    expect(lonely?.observed_lower).toBeNull();
    expect(lonely?.gap).toBeNull();
    const trend = report.value.compensation.residual_latency_per_100ms;
    expect(trend?.std_error).toBeGreaterThan(0.01);
    expect(report.value.warnings.map((issue) => issue.code)).toContain('band_not_compared');
  });

  it('says how much data a verdict would need when it cannot tell', async () => {
    const report = await fixtureReport('live-rounds.csv', { margin: 0.17 });
    expect(report.verdict).toBe('not_enough_data');
    const needed = report.compensation.data_needed;
    expect(needed?.to_show).toBe('equivalence');
    expect(needed?.players).toBeGreaterThan(48);
    expect(needed?.rows_are).toBe('rounds');
    expect(report.compensation.message).toMatch(/about [\d,]+ players playing as much as these/);
  });
});

describe('checkField() on telemetry that does not belong to the model', () => {
  it('refuses a file without a player column', () => {
    const text = liveText.split('\n').map((line) => line.split(',').slice(1).join(',')).join('\n');
    const report = checkField(trialsOf(text), model);
    expect(report.ok).toBe(false);
    if (report.ok) return;
    expect(report.issues[0]).toMatchObject({ code: 'missing_column', location: 'live.csv:player' });
  });

  it('refuses a single player, naming them', () => {
    const report = checkField(trialsOf(editedLive((fields) => ['p01', ...fields.slice(1)])), model);
    expect(report.ok).toBe(false);
    if (report.ok) return;
    expect(report.issues[0]).toMatchObject({ code: 'too_few_players', location: 'live.csv:player' });
    expect(report.issues[0]?.message).toContain('got 1 ("p01")');
  });

  it('refuses difficulty levels the model does not know, naming them and their attempts', () => {
    const report = checkField(trialsOf(editedLive((fields, index) => (index < 3 ? [...fields.slice(0, 3), 'nightmare', ...fields.slice(4)] : fields))), model);
    expect(report.ok).toBe(false);
    if (report.ok) return;
    expect(report.issues[0]).toMatchObject({ code: 'wrong_difficulty', location: 'live.csv:difficulty' });
    expect(report.issues[0]?.message).toContain('got "nightmare" (60 attempts)');
  });

  it('refuses numeric difficulties for a model of named levels', () => {
    const report = checkField(trialsOf(editedLive((fields) => [...fields.slice(0, 3), '2', ...fields.slice(4)])), model);
    expect(report.ok).toBe(false);
    if (!report.ok) expect(codes(report.issues)).toEqual(['wrong_difficulty']);
  });

  it('refuses telemetry of another attribute than the model\'s, and warns when the model does not say', () => {
    const source = JSON.parse(fieldFixtureText('field-model.json')) as Record<string, unknown>;
    const withAttribute = compileModel({ ...source, attribute: 'hit_area' });
    if (!withAttribute.ok) throw new Error('model');
    const mismatch = checkField(trialsOf(liveText), withAttribute.value, { attribute: 'timing_window', modelFile: 'field-model.json' });
    expect(mismatch.ok).toBe(false);
    if (!mismatch.ok) {
      expect(mismatch.issues[0]).toMatchObject({ code: 'attribute_mismatch', location: 'field-model.json:attribute' });
      expect(mismatch.issues[0]?.message).toBe('live telemetry that scaled "timing_window" requires a model fitted on the same attribute, got a model of "hit_area"');
    }
    const unknown = checkField(trialsOf(liveText), model, { attribute: 'timing_window' });
    expect(unknown.ok && codes(unknown.warnings)).toContain('attribute_unknown');
  });

  it('refuses bad options with the option named', () => {
    const report = checkField(trialsOf(liveText), model, { margin: 0, bands: [80, 40] });
    expect(report.ok).toBe(false);
    if (!report.ok) expect(report.issues.map((issue) => issue.location)).toEqual(['margin', 'bands']);
  });
});
