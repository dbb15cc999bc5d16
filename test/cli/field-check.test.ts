import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { compileModel } from '../../src/model/compile.js';
import { defaultRules } from '../../src/solver/rules.js';
import { modelTruth, simulateSeason } from '../../tools/simulate-season.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES, ROOT } from '../helpers/demo.js';
import { fieldFixture } from '../helpers/field-fixtures.js';

const live = join(MATCHES, 'live-telemetry.csv');
const model = join(MATCHES, 'model.json');
const rules = join(MATCHES, 'league-rules.json');
const ajv = new Ajv2020({ strict: false, allErrors: true }); // a general-purpose JSON Schema validator as the outside reference
const schema = JSON.parse(readFileSync(join(ROOT, 'docs', 'schemas', 'field-check.schema.json'), 'utf8')) as object;
const folder = mkdtempSync(join(tmpdir(), 'lagparity-field-cli-'));

/** A season in which compensation holds: the ground truth plays, its scales from the solver at a reference latency. */
function holdingSeason(): { file: string; rulesFile: string; modelFile: string } {
  const modelFile = join(MATCHES, 'ground-truth.model.json');
  const compiled = compileModel(JSON.parse(readFileSync(modelFile, 'utf8')));
  if (!compiled.ok) throw new Error('model');
  const seasonRules = { scale_cap: 2, target: { kind: 'reference_latency' as const, latency_ms: 10 } };
  const levels = ['standard', 'veteran', 'elite'];
  const season = simulateSeason({
    players: 800, matchDays: 2, lobbySize: 10, attemptsPerRound: 150, homeLatency: { min: 10, max: 160 }, jitterMs: 4, skillSd: 0.15,
    difficulties: levels, model: compiled.value, rules: defaultRules(seasonRules), truth: modelTruth(compiled.value), seed: 5000,
  });
  const lines = ['player,latency_ms,scale,difficulty,hits,attempts'];
  for (let row = 0; row < season.rounds; row += 1) {
    lines.push(`${season.players[season.player[row] as number]},${season.latency[row]},${season.scale[row]},${levels[season.difficulty[row] as number]},${season.hits[row]},${season.attempts[row]}`);
  }
  const file = join(folder, 'season.csv');
  writeFileSync(file, `${lines.join('\n')}\n`);
  const rulesFile = join(folder, 'season-rules.json');
  writeFileSync(rulesFile, JSON.stringify({ format: 'lagparity/rules@1', ...seasonRules }));
  return { file, rulesFile, modelFile };
}

describe('lagparity field-check', () => {
  it('checks the demo season: under-compensates as the model expected, refit, exit 1', () => {
    const run = runCli(['field-check', live, '--model', model, '--rules', rules]);
    expect(run.status).toBe(1);
    expect(run.stdout).toContain('Compensation: UNDER-COMPENSATES (margin ±2.0 pp)');
    expect(run.stdout).toMatch(/The model expected -[\d.]+ pp at the scales applied/);
    expect(run.stdout).toContain('│ latency band       │ rounds │ players (control) │ mean scale │ predicted before │ predicted after [95%] │       observed [95%] │ gap to band 0-40 ms [90%] │');
    expect(run.stdout).toContain('Model: REFIT');
    expect(run.stdout).toContain(`lagparity fit ${live} --link logit --terms latency,log_scale,difficulty,latency_x_log_scale --reference standard --out ${join(MATCHES, 'model-refit.json')}`);
    expect(run.stdout).toMatch(/^Control: 1 player never had a scale above 1/m);
    expect(run.stdout).toContain("The league's own rules and officials decide");
    expect(run.stderr).toContain('live-telemetry.csv:player: warning band_not_compared');
  });

  it('writes one JSON document that its JSON Schema accepts', () => {
    const run = runCli(['field-check', live, '--model', model, '--rules', rules, '--json']);
    expect(run.status).toBe(1);
    const document = JSON.parse(run.stdout) as { format: string; verdict: string; data: { sha256: string } };
    expect(document.format).toBe('lagparity/field-check@1');
    expect(ajv.compile(schema)(document)).toBe(true);
    expect(document.data.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('gives the same document, byte for byte, with its calibration fits on one thread or on two (--threads)', () => {
    const one = runCli(['field-check', live, '--model', model, '--rules', rules, '--json', '--threads', '1']);
    const two = runCli(['field-check', live, '--model', model, '--rules', rules, '--json', '--threads', '2']);
    expect(one.status).toBe(1);
    expect(two.status).toBe(1);
    expect(two.stdout).toBe(one.stdout);
    expect(runCli(['field-check', live, '--model', model, '--threads', 'many']).stderr).toBe('--threads: error invalid_option: `--threads` requires a whole number from 1 to 256, got "many"\n');
  });

  it('exits 0 when compensation holds and the model is kept', () => {
    const season = holdingSeason();
    const run = runCli(['field-check', season.file, '--model', season.modelFile, '--rules', season.rulesFile, '--bands', '40,80,120']);
    expect(run.stdout).toContain('Compensation: HOLDS');
    expect(run.stdout).toContain('Model: KEEP');
    expect(run.status).toBe(0);
  });

  it.each([
    [['--margin', 'two'], '--margin: error invalid_option: `--margin` requires a hit-probability gap above 0 and below 0.5, such as 0.02, got "two"'],
    [['--bands', '80,40'], '--bands: error invalid_option: `--bands` requires strictly increasing cut points, got 40 after 80'],
    [['--attribute', 'hitbox'], '--attribute: error invalid_option: `--attribute` requires hit_area or timing_window, got "hitbox"'],
  ])('refuses bad options %j with exit 2', (extra, message) => {
    const run = runCli(['field-check', live, '--model', model, ...extra]);
    expect(run.status).toBe(2);
    expect(run.stderr.trim()).toBe(message);
    expect(run.stdout).toBe('');
  });

  it('refuses telemetry that does not belong to the model with exit 2, naming file, column and value', () => {
    const text = readFileSync(fieldFixture('live-rounds.csv'), 'utf8').replace('p01,120,1.332,standard', 'p01,120,1.332,nightmare');
    const file = join(folder, 'nightmare.csv');
    writeFileSync(file, text);
    const run = runCli(['field-check', file, '--model', fieldFixture('field-model.json')]);
    expect(run.status).toBe(2);
    expect(run.stderr.trim()).toBe('nightmare.csv:difficulty: error wrong_difficulty: the model requires difficulty levels among "standard", "veteran", got "nightmare" (20 attempts)');
    expect(run.stdout).toBe('');
  });

  it('refuses a scale column that is all missing with exit 2, at its first row', () => {
    const text = readFileSync(fieldFixture('live-rounds.csv'), 'utf8').split('\n').map((line, index) => (index === 0 || line === '' ? line : line.split(',').map((field, column) => (column === 2 ? '' : field)).join(','))).join('\n');
    const file = join(folder, 'no-scales.csv');
    writeFileSync(file, text);
    const run = runCli(['field-check', file, '--model', fieldFixture('field-model.json')]);
    expect(run.status).toBe(2);
    expect(run.stderr.trim()).toBe('no-scales.csv:2:scale: error empty_field: `scale` requires a finite decimal number, got an empty field (stopped after 0 good rows)');
  });

  it('refuses an attribute the model was not fitted on', () => {
    const document = JSON.parse(readFileSync(fieldFixture('field-model.json'), 'utf8')) as Record<string, unknown>;
    const modelFile = join(folder, 'timing.model.json');
    writeFileSync(modelFile, JSON.stringify({ ...document, attribute: 'timing_window' }));
    const run = runCli(['field-check', fieldFixture('live-rounds.csv'), '--model', modelFile, '--attribute', 'hit_area']);
    expect(run.status).toBe(2);
    expect(run.stderr.trim()).toBe('timing.model.json:attribute: error attribute_mismatch: live telemetry that scaled "hit_area" requires a model fitted on the same attribute, got a model of "timing_window"');
  });
});
