import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { GROUND_TRUTH } from '../../tools/demo-scenario.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';

const trials = join(MATCHES, 'playtest-trials.csv');
const scratch = mkdtempSync(join(tmpdir(), 'lagparity-fit-cli-'));

describe('lagparity fit', () => {
  it('prints the coefficient table and the fit statistics for people', () => {
    const run = runCli(['fit', trials, '--folds', '3']);
    expect(run.status, run.stderr).toBe(0);
    const lines = run.stdout.split('\n');
    expect(lines[0]).toBe('playtest-trials.csv: 3240 rows (per round, 64800 attempts, 36 players; 3240 after collapsing); binomial logit, grouped likelihood: converged (5 iterations)');
    // Clustered: one set of errors drives z, p and the interval (the robust ones); the model SE is shown beside them.
    expect(lines[2]).toMatch(/^│ term\s+│\s+estimate │\s+robust SE │\s+z │\s+p │\s+95% interval │\s+model SE │$/);
    expect(run.stdout).toMatch(/^robust SE: CR1 by player \(36 clusters\), the errors the model file keeps; z, p \(two-sided, normal\) and the interval use them; model SE for comparison$/m);
    for (const name of Object.keys(GROUND_TRUTH.coefficients)) expect(run.stdout).toMatch(new RegExp(`│ ${name.replace(/[[\]]/g, '\\$&')}\\s+│`));
    expect(run.stdout).toMatch(/^deviance \d+\.\d\d on 3234 df \(null \d+\.\d\d on 3239 df\); log-likelihood -\d+\.\d\d; AIC \d+\.\d\d; BIC \d+\.\d\d$/m);
    expect(run.stdout).toMatch(/^cross-validation \(3 folds by player, seed 1\): log loss 0\.\d{4}, Brier 0\.\d{4}, calibration error 0\.\d{4}$/m);
    expect(run.stdout).toMatch(/^likelihood-ratio tests: latency chi² [\d.]+ on 2 df, p < 1e-16; scale chi² [\d.]+ on 2 df, p < 1e-16; difficulty chi² [\d.]+ on 2 df, p < 1e-16$/m);
    expect(run.stderr).toBe('playtest-trials.csv:player: warning few_clusters: `cluster` by player requires at least 40 players for trustworthy robust errors, got 36; with few clusters CR1 errors are biased low (Cameron and Miller 2015)\n');
  });

  it('gives the same result, byte for byte, with its refits on one thread or on two (--threads), and refuses a bad --threads', () => {
    const one = runCli(['fit', trials, '--json', '--threads', '1']);
    const two = runCli(['fit', trials, '--json', '--threads', '2']);
    expect(one.status, one.stderr).toBe(0);
    expect(two.status, two.stderr).toBe(0);
    expect(two.stdout).toBe(one.stdout);
    const bad = runCli(['fit', trials, '--threads', '0']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toBe('--threads: error invalid_option: `--threads` requires a whole number from 1 to 256, got "0"\n');
  });

  it('writes the whole result as one JSON document with --json', () => {
    const run = runCli(['fit', trials, '--json', '--folds', '0', '--cluster', 'none']);
    expect(run.status, run.stderr).toBe(0);
    const result = JSON.parse(run.stdout) as { format: string; report: { status: string; cluster: { by: string }; coefficients: { name: string }[]; cross_validation: unknown }; provenance: { sha256: string } };
    expect(result.format).toBe('lagparity/fit-result@1');
    expect(result.report.status).toBe('converged');
    expect(result.report.cluster.by).toBe('none');
    expect(result.report.cross_validation).toBeNull();
    expect(result.report.coefficients.map((row) => row.name)).toEqual(Object.keys(GROUND_TRUTH.coefficients));
    expect(result.provenance.sha256).toBe(createHash('sha256').update(readFileSync(trials)).digest('hex'));
  });

  it('writes a model file that compiles, refuses to overwrite it, and replaces it with --force', () => {
    const out = join(scratch, 'model.json');
    const first = runCli(['fit', trials, '--out', out, '--folds', '0']);
    expect(first.status, first.stderr).toBe(0);
    const written = readFileSync(out, 'utf8');
    expect(compileModel(JSON.parse(written)).ok).toBe(true);
    const again = runCli(['fit', trials, '--out', out, '--folds', '0', '--link', 'probit']);
    expect(again.status).toBe(2);
    expect(again.stderr).toMatch(new RegExp(`^${out.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&')}: error file_exists: `, 'm'));
    expect(readFileSync(out, 'utf8')).toBe(written);
    const forced = runCli(['fit', trials, '--out', out, '--folds', '0', '--link', 'probit', '--force']);
    expect(forced.status, forced.stderr).toBe(0);
    expect((JSON.parse(readFileSync(out, 'utf8')) as { link: string }).link).toBe('probit');
  });

  it('ranks --compare candidates by held-out log loss', () => {
    const run = runCli(['fit', trials, '--folds', '3', '--compare', 'logit;least_squares;probit:latency,difficulty', '--json']);
    expect(run.status, run.stderr).toBe(0);
    const result = JSON.parse(run.stdout) as { comparison: { spec: string; log_loss: number }[] };
    expect(result.comparison.map((entry) => entry.spec).sort()).toEqual(['least_squares', 'logit', 'probit:latency,difficulty']);
    const losses = result.comparison.map((entry) => entry.log_loss);
    expect([...losses].sort((a, b) => a - b)).toEqual(losses);
    expect(result.comparison[2]?.spec).toBe('probit:latency,difficulty');
  });

  it('refuses a bad row with exit 2, naming file:line:column, and writes nothing', () => {
    const bad = join(scratch, 'bad.csv');
    writeFileSync(bad, 'latency_ms,scale,difficulty,hit\n20,1,a,1\n30,1,a,maybe\n');
    const out = join(scratch, 'never.json');
    const run = runCli(['fit', bad, '--out', out]);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/^bad\.csv:3:hit: error not_a_number: `hit` requires a finite decimal number, got "maybe"/);
    expect(run.stderr).not.toMatch(/\n\s+at /);
    expect(existsSync(out)).toBe(false);
  });

  it('refuses unknown options values with exit 2', () => {
    const run = runCli(['fit', trials, '--link', 'tanh', '--terms', 'latency,wobble']);
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/^--link: error invalid_option: `--link` requires one of logit, probit, cloglog, got "tanh"$/m);
    expect(run.stderr).toMatch(/^--terms: error unknown_term: /m);
  });

  it('fits the main model alone with --folds 0 --lr-tests none --no-baseline, with the same estimates', () => {
    const alone = runCli(['fit', trials, '--json', '--folds', '0', '--lr-tests', 'none', '--no-baseline', '--cluster', 'none']);
    const full = runCli(['fit', trials, '--json', '--folds', '0', '--cluster', 'none']);
    expect(alone.status, alone.stderr).toBe(0);
    expect(full.status, full.stderr).toBe(0);
    type Result = { report: { likelihood_ratio_tests: unknown[]; baseline: unknown; coefficients: { estimate: number; std_error: number }[] } };
    const a = (JSON.parse(alone.stdout) as Result).report;
    const b = (JSON.parse(full.stdout) as Result).report;
    expect(a.likelihood_ratio_tests).toEqual([]);
    expect(a.baseline).toBeNull();
    expect(b.likelihood_ratio_tests.length).toBe(3);
    expect(b.baseline).not.toBeNull();
    expect(a.coefficients).toEqual(b.coefficients);
    const help = runCli(['fit', '--help']).stdout;
    expect(help).toMatch(/--lr-tests <which>/);
    expect(help).toMatch(/--no-baseline/);
    expect(runCli(['fit', trials, '--lr-tests', 'some']).stderr).toMatch(/--lr-tests: error invalid_option: `--lr-tests` requires all or none, got "some"/);
  });

  it('documents the --compare syntax with a worked example in --help', () => {
    const run = runCli(['fit', '--help']);
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/--compare "logit;probit;cloglog:latency,log_scale,difficulty;least_squares"/);
  });
});
