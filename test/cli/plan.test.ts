/** `lagparity plan schedule` and `lagparity plan size`, run as a user runs them (the built CLI bundle). */
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { MATCHES, ROOT, readJson } from '../helpers/demo.js';

const PLAN = join(MATCHES, 'preseason-playtest.plan.json');
// ajv (a general-purpose JSON Schema validator from the npm registry) checks the outputs against the published schemas.
const ajv = new Ajv2020({ strict: false, allErrors: true });
const schema = (name: string) => ajv.compile(readJson(join(ROOT, 'docs', 'schemas', name)) as object);

function folder(): string {
  return mkdtempSync(join(tmpdir(), 'lagparity-plan-'));
}

/** A small size study by options alone (entered effects), fast enough for the suite. */
const SMALL = ['--latency', '0,100,200', '--scale', '1,1.5', '--difficulty', 'standard', '--repetitions', '2', '--participants', '8', '--round-seconds', '30', '--attempts', '20', '--hit-rate', '0.7', '--change-per-100ms', '-0.15', '--scale-hit-rate', '1.5:0.8', '--at-latency', '100', '--players', '6:18:6', '--studies', '100', '--seed', '5'];

describe('lagparity plan schedule', () => {
  it('writes the demo plan\'s schedule as CSV and says it used a Williams design', () => {
    const out = join(folder(), 'schedule.csv');
    const run = runCli(['plan', 'schedule', PLAN, '--out', out]);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    expect(run.stdout).toContain('order: Williams design: 16 condition(s) give a Williams design of 16 sequence(s)');
    expect(run.stdout).toContain('session: 34 rounds (2 practice), 30.9 minutes (limit 45)');
    expect(run.stdout).toContain(`wrote ${out} (544 rounds)`);
    const lines = readFileSync(out, 'utf8').trimEnd().split('\n');
    expect(lines[0]).toBe('player,round,latency_ms,scale,difficulty,practice,weight');
    expect(lines).toHaveLength(1 + 16 * 34);
    expect(lines[1]).toBe('P01,1,0,1,standard,1,0');
  });

  it('gives the same schedule from options as from the file, and JSON with every round', () => {
    const fromFile = runCli(['plan', 'schedule', PLAN, '--json']);
    const options = ['--latency', '0,60,120,180', '--scale', '1,1.5', '--difficulty', 'standard,elite', '--repetitions', '2', '--participants', '16', '--practice', '2', '--round-seconds', '40', '--pause-seconds', '15', '--seed', '2304', '--label', 'Harbourline Arena League, season 4 preseason: latency and hit-area playtest'];
    const fromOptions = runCli(['plan', 'schedule', ...options, '--json']);
    expect(fromOptions.status).toBe(0);
    expect(fromOptions.stdout).toBe(fromFile.stdout);
    const schedule = JSON.parse(fromFile.stdout) as { format: string; design: { kind: string }; rounds: unknown[] };
    expect(schedule.format).toBe('lagparity/playtest-schedule@1');
    expect(schedule.design.kind).toBe('williams');
    expect(schedule.rounds).toHaveLength(16 * 34);
  });

  it('goes straight into `lagparity fit` once hits and attempts are added', () => {
    const dir = folder();
    const out = join(dir, 'schedule.csv');
    expect(runCli(['plan', 'schedule', PLAN, '--out', out]).status).toBe(0);
    const [head, ...rows] = readFileSync(out, 'utf8').trimEnd().split('\n');
    // Invented counts (not data): fewer hits at higher latency, more at scale 1.5, a little row-to-row variation.
    const played = rows.map((line, index) => {
      const [, , latency, scale] = line.split(',');
      const hits = Math.round(14 - Number(latency) / 30 + (Number(scale) > 1 ? 3 : 0) + ((index * 7) % 5) - 2);
      return `${line},${Math.max(0, Math.min(20, hits))},20`;
    });
    const results = join(dir, 'results.csv');
    writeFileSync(results, `${head},hits,attempts\n${played.join('\n')}\n`);
    const fit = runCli(['fit', results, '--folds', '0', '--lr-tests', 'none', '--json']);
    expect(fit.status, fit.stderr).toBe(0);
    expect(fit.stderr).toContain('warning unknown_column: columns ignored: "round", "practice"');
    const report = (JSON.parse(fit.stdout) as { report: { status: string; cluster: { clusters: number } } }).report;
    expect(report.status).toBe('converged');
    expect(report.cluster.clusters).toBe(16);
  });

  it('refuses to replace an existing file without --force, leaving it whole', () => {
    const out = join(folder(), 'schedule.csv');
    writeFileSync(out, 'keep me');
    const run = runCli(['plan', 'schedule', PLAN, '--out', out]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain(`${out}: error file_exists`);
    expect(readFileSync(out, 'utf8')).toBe('keep me');
  });

  it('names the option for a bad level given as an option, and warns about a long session', () => {
    const bad = runCli(['plan', 'schedule', PLAN, '--latency', '0,60,60']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toBe('--latency: error levels_not_increasing: `latency_ms[2]` requires levels in increasing order without repeats (after 60), got 60\n');
    const long = runCli(['plan', 'schedule', PLAN, '--repetitions', '3']);
    expect(long.status).toBe(0);
    expect(long.stderr).toBe('session_limit_minutes: warning long_session: a session requires at most `session_limit_minutes` (45) minutes, got 45.6 (50 rounds of 40 s with 15 s between); split it into sessions or lower `repetitions`\n');
  });
});

describe('lagparity plan size', () => {
  it('gives the same JSON on one thread and on two, valid against its published schema', () => {
    const one = runCli(['plan', 'size', ...SMALL, '--width', '1', '--threads', '1', '--json']);
    const two = runCli(['plan', 'size', ...SMALL, '--width', '1', '--threads', '2', '--json']);
    expect(one.status, one.stderr).toBe(0);
    expect(two.stdout).toBe(one.stdout);
    const study = JSON.parse(one.stdout) as { format: string; rows: { participants: number }[]; recommended: unknown };
    expect(schema('playtest-size.schema.json')(study)).toBe(true);
    expect(study.rows.map((row) => row.participants)).toEqual([6, 12, 18]);
    expect(study.recommended).not.toBeNull();
  });

  it('prints the table and the recommendation, writes --out, and prints no progress off a terminal', () => {
    const out = join(folder(), 'size.json');
    const run = runCli(['plan', 'size', ...SMALL, '--width', '1', '--out', out]);
    expect(run.status).toBe(0);
    expect(run.stderr).toBe('');
    expect(run.stdout).toContain('│ players │ reps │ minutes │ latency power │');
    expect(run.stdout).toMatch(/=> \d+ participants with 2 repetition\(s\) of each condition/);
    expect(existsSync(out)).toBe(true);
  });

  it('says so when no size in the range meets the goal, names the closest, and writes nothing', () => {
    const out = join(folder(), 'size.json');
    const run = runCli(['plan', 'size', ...SMALL, '--width', '0.01', '--out', out]);
    expect(run.status).toBe(1);
    expect(run.stderr).toMatch(/^--width: error goal_not_met: the goal requires a size that meets it, got none from 6 to 18 participants; closest: 18 participants with 2 repetition\(s\): 90th percentile width [0-9.]+ .* against the goal 0.01; .* nothing was written to /);
    expect(existsSync(out)).toBe(false);
  });

  it('refuses a pilot model without a scale term, naming the file', () => {
    const run = runCli(['plan', 'size', ...SMALL, '--width', '1', '--pilot-model', join(ROOT, 'test', 'fixtures', 'bad', 'model-no-scale-term.json')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/^model-no-scale-term\.json:terms: error no_scale_term: planning compensation requires a pilot model with a scale term/);
  });

  it("estimates the players' spread from a pilot's trials and says so", () => {
    const run = runCli(['plan', 'size', ...SMALL.slice(0, -4), '--studies', '100', '--seed', '5', '--difficulty', 'standard,veteran', '--pilot-model', join(MATCHES, 'model.json'), '--pilot-trials', join(MATCHES, 'playtest-trials.csv'), '--width', '1', '--json']);
    expect(run.status, run.stderr).toBe(0);
    const study = JSON.parse(run.stdout) as { assumptions: { player_sd: number; player_sd_source: string; source: string } };
    expect(study.assumptions.source).toBe('pilot_model');
    expect(study.assumptions.player_sd_source).toBe('pilot_trials');
    // The demo's testers were drawn with a skill spread of 0.15 (docs/demo.md); 36 testers estimate it roughly.
    expect(study.assumptions.player_sd).toBeGreaterThan(0.05);
    expect(study.assumptions.player_sd).toBeLessThan(0.3);
  });

  it('adds the precision and power charts to the report', () => {
    const dir = folder();
    const study = join(dir, 'size.json');
    expect(runCli(['plan', 'size', ...SMALL, '--width', '1', '--out', study]).status).toBe(0);
    const html = join(dir, 'report.html');
    const report = runCli(['report', '--trials', join(MATCHES, 'playtest-trials.csv'), '--model', join(MATCHES, 'model.json'), '--size-study', study, '--out', html]);
    expect(report.status, report.stderr).toBe(0);
    expect(report.stderr).toBe(''); // no chart messages either
    expect(report.stdout).toBe(`wrote ${html} (8 charts)\n`);
    const page = readFileSync(html, 'utf8');
    expect(page).toContain('<details open id="size-study-section">');
    expect(page).toContain('id="figure-size-precision"');
    expect(page).toContain('id="figure-size-power"');
  });

  it('validates the demo plan against its published schema', () => {
    expect(schema('playtest-plan.schema.json')(readJson(PLAN))).toBe(true);
    const run = runCli(['validate', PLAN]);
    expect(run.status).toBe(0);
    expect(run.stdout).toBe('valid   plan preseason-playtest.plan.json\n');
  });
});
