import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';

function tempFile(name: string, text: string): string {
  const path = join(mkdtempSync(join(tmpdir(), 'lagparity-summarize-')), name);
  writeFileSync(path, text);
  return path;
}

// Vector D of boxplot_stats_r.csv (2 2 2 3 3 4 10 10) as hits of 10, at one latency;
// R 4.2.2 boxplot.stats: stats 2 2 3 7 10, no outliers. Plus a second difficulty.
const tiny = [
  'player,latency_ms,scale,difficulty,hits,attempts',
  ...[2, 2, 2, 3, 3, 4, 10, 10].map((hits, index) => `p${index},40,1,standard,${hits},10`),
  'p0,40,1,elite,1,4',
  'p1,40,1,elite,3,4',
].join('\n');

describe('lagparity summarize', () => {
  it('prints a compact table with the bins and the box definition stated', () => {
    const run = runCli(['summarize', tempFile('tiny.csv', tiny), '--by', 'latency,difficulty']);
    expect(run.status).toBe(0);
    expect(run.stderr).toBe('');
    expect(run.stdout).toMatchInlineSnapshot(`
      "tiny.csv: 10 rows (one row per round), 10 rounds, 88 attempts, mean accuracy 0.455
      latency: one group per value (1 distinct value)
      difficulty: one group per level, in the order the file first names them (2 levels)
      ┌─────────┬────────────┬────────┬──────────┬──────────┬─────────────┬─────────────┬────────┬─────────────┬──────────────┬──────────┐
      │ latency │ difficulty │ rounds │ attempts │ mean acc │ low whisker │ lower hinge │ median │ upper hinge │ high whisker │ outliers │
      │ 40      │ standard   │      8 │       80 │    0.450 │       0.200 │       0.200 │  0.300 │       0.700 │        1.000 │        0 │
      │ 40      │ elite      │      2 │        8 │    0.500 │       0.250 │       0.250 │  0.500 │       0.750 │        0.750 │        0 │
      └─────────┴────────────┴────────┴──────────┴──────────┴─────────────┴─────────────┴────────┴─────────────┴──────────────┴──────────┘
      Accuracy per round = hits / attempts; mean acc = total hits / total attempts.
      Box: Tukey's hinges, whiskers to the most extreme rounds within 1.5 hinge spreads of the hinges (Tukey 1977); outliers are the rounds beyond (counted here, listed by --json).
      Rounds: one row of the file is one round; its accuracy is hits / attempts.
      "
    `);
  });

  it('writes one JSON document and nothing else with --json', () => {
    const run = runCli(['summarize', tempFile('tiny.csv', tiny), '--by', 'difficulty', '--json']);
    expect(run.status).toBe(0);
    const document = JSON.parse(run.stdout);
    expect(document.format).toBe('lagparity/summary@1');
    expect(document.by).toEqual(['difficulty']);
    const standard = document.conditions[0];
    expect(standard.condition).toEqual({ difficulty: 'standard' });
    // R 4.2.2 boxplot.stats(c(2,2,2,3,3,4,10,10))$stats = 2 2 3 7 10, divided by 10 attempts.
    expect([standard.accuracy.lower_whisker, standard.accuracy.lower_hinge, standard.accuracy.median, standard.accuracy.upper_hinge, standard.accuracy.upper_whisker]).toEqual([0.2, 0.2, 0.3, 0.7, 1]);
    expect(standard.accuracy.iqr_type7).toBeCloseTo(0.35, 14); // R IQR(x) = 3.5, / 10
  });

  it('summarises the demo playtest in six stated latency bins', () => {
    const run = runCli(['summarize', join(MATCHES, 'playtest-trials.csv'), '--by', 'latency', '--json']);
    expect(run.status).toBe(0);
    const document = JSON.parse(run.stdout);
    expect(document.groupings.latency.method).toBe('quantile');
    expect(document.conditions).toHaveLength(6);
    expect(document.conditions.map((condition: { rounds: number }) => condition.rounds)).toEqual([540, 540, 540, 540, 540, 540]);
    const means = document.conditions.map((condition: { mean_accuracy: number }) => condition.mean_accuracy);
    for (let index = 1; index < means.length; index += 1) expect(means[index]).toBeLessThan(means[index - 1]);
  });

  it('takes fixed-width latency bins', () => {
    const run = runCli(['summarize', join(MATCHES, 'playtest-trials.csv'), '--by', 'latency', '--latency-bins', 'width:40', '--json']);
    expect(run.status).toBe(0);
    const labels = JSON.parse(run.stdout).conditions.map((condition: { condition: { latency: string } }) => condition.condition.latency);
    expect(labels[0]).toBe('[0, 40) ms');
    expect(labels.at(-1)).toBe('[240, 280) ms');
  });

  it('exits 2 naming file, line and field on a bad row, without a stack trace or NaN', () => {
    const path = tempFile('broken.csv', 'latency_ms,scale,difficulty,hits,attempts\n40,1,standard,3,10\n40,1,standard,12,10\n');
    const run = runCli(['summarize', path]);
    expect(run.status).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toContain('broken.csv:3:hits');
    expect(run.stderr).not.toMatch(/\n\s+at /);
    expect(run.stderr).not.toContain('NaN');
  });

  it('exits 2 on an unknown covariate, a bad bin spec and a missing file', () => {
    const path = tempFile('tiny.csv', tiny);
    const unknown = runCli(['summarize', path, '--by', 'latency,ping']);
    expect(unknown.status).toBe(2);
    expect(unknown.stderr).toContain('--by: error unknown_factor');
    const bins = runCli(['summarize', path, '--latency-bins', 'width:0']);
    expect(bins.status).toBe(2);
    expect(bins.stderr).toContain('--latency-bins: error bad_bins');
    const missing = runCli(['summarize', join(MATCHES, 'nope.csv')]);
    expect(missing.status).toBe(2);
    expect(missing.stderr).toContain('cannot_read');
    for (const run of [unknown, bins, missing]) expect(run.stdout).toBe('');
  });
});
