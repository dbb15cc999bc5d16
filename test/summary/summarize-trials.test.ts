import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { listOf, numberOf, readBoxplotReferences } from '../helpers/stats-fixtures.js';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Trials } from '../../src/formats/trials-types.js';
import { parseFactorList, summarizeTrials, type TrialsSummary } from '../../src/summary/summarize-trials.js';
import { createRandomSource } from '../../src/random.js';

// R 4.2.2 boxplot.stats(x), IQR(x) and quantile(x, type = 7); see test/fixtures/stats/README.md.
const references = readBoxplotReferences();
const quantilesType7 = new Map<number, number>();
for (const line of readFileSync(new URL('../fixtures/stats/quantiles_r.csv', import.meta.url), 'utf8').trim().split('\n').slice(1)) {
  const [type, p, value] = line.split(',').map(Number);
  if (type === 7) quantilesType7.set(p as number, value as number);
}

function trialsOf(csv: string): Trials {
  const parsed = parseTrialsCsv(csv, 'tiny.csv');
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.value;
}

function summaryOf(trials: Trials, options: Parameters<typeof summarizeTrials>[1]): TrialsSummary {
  const result = summarizeTrials(trials, options);
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.value;
}

/**
 * Each fixture vector x becomes per-round accuracies (x + offset) / attempts,
 * hits and attempts whole numbers, accuracies in [0, 1]. Box statistics are
 * affine-equivariant, so R's values map the same way.
 */
const scaling: Record<string, { offset: number; attempts: number }> = {
  A_no_outliers_n10: { offset: 0, attempts: 21 },
  B_high_outlier_n11: { offset: 0, attempts: 50 },
  C_both_sides_n13: { offset: 30, attempts: 90 },
  D_ties_n8: { offset: 0, attempts: 10 },
};

describe('summarizeTrials() box statistics against R 4.2.2 boxplot.stats (boxplot_stats_r.csv)', () => {
  it('read the four reference vectors A–D', () => {
    expect([...references.keys()]).toEqual(Object.keys(scaling));
  });

  for (const [name, reference] of references) {
    const { offset, attempts } = scaling[name] as { offset: number; attempts: number };
    const mapped = (value: number) => (value + offset) / attempts;
    const csv = ['latency_ms,scale,difficulty,hits,attempts', ...reference.values.map((value) => `40,1,standard,${value + offset},${attempts}`)].join('\n');
    const summary = summaryOf(trialsOf(csv), { by: [] });

    it(`vector ${name}: one condition with R's n, whiskers, hinges and median`, () => {
      expect(summary.conditions).toHaveLength(1);
      const condition = summary.conditions[0];
      expect(condition?.rounds).toBe(numberOf(reference, 'n')); // R boxplot.stats()$n
      const box = condition?.accuracy;
      const ours = [box?.lower_whisker, box?.lower_hinge, box?.median, box?.upper_hinge, box?.upper_whisker];
      ['stats1', 'stats2', 'stats3', 'stats4', 'stats5'].forEach((quantity, index) => {
        expect(ours[index]).toBeCloseTo(mapped(numberOf(reference, quantity)), 14); // R boxplot.stats()$stats
      });
    });

    it(`vector ${name}: R's outliers, notch and type 7 IQR`, () => {
      const box = summary.conditions[0]?.accuracy;
      const outliers = listOf(reference, 'out').map(mapped);
      expect(box?.outliers).toHaveLength(outliers.length);
      outliers.forEach((value, index) => expect(box?.outliers[index]).toBeCloseTo(value, 14)); // R boxplot.stats()$out
      expect(box?.notch[0]).toBeCloseTo(mapped(numberOf(reference, 'conf_lower')), 13); // R boxplot.stats()$conf
      expect(box?.notch[1]).toBeCloseTo(mapped(numberOf(reference, 'conf_upper')), 13); // R boxplot.stats()$conf
      expect(box?.iqr_type7).toBeCloseTo(numberOf(reference, 'IQR_type7') / attempts, 14); // R IQR(x), type 7
    });
  }

  it('gives the type 7 quartiles of R quantile(type = 7) (quantiles_r.csv, vector A)', () => {
    const values = references.get('A_no_outliers_n10')?.values ?? [];
    expect(values).toEqual([1, 3, 4, 7, 8, 9, 12, 15, 20, 21]); // the vector of quantiles_r.csv
    const csv = ['latency_ms,scale,difficulty,hits,attempts', ...values.map((value) => `40,1,1,${value},21`)].join('\n');
    const box = summaryOf(trialsOf(csv), { by: [] }).conditions[0]?.accuracy;
    expect(box?.quartiles_type7[0]).toBeCloseTo((quantilesType7.get(0.25) as number) / 21, 14); // R quantile(x, 0.25, type = 7) = 4.75
    expect(box?.quartiles_type7[1]).toBeCloseTo((quantilesType7.get(0.75) as number) / 21, 14); // R quantile(x, 0.75, type = 7) = 14.25
  });
});

describe('summarizeTrials() on per-attempt files', () => {
  // Vector D of boxplot_stats_r.csv as 8 players x 10 shots, hits = the vector's values,
  // the shots shuffled and spread over latencies inside one bin.
  const hitsPerPlayer = references.get('D_ties_n8')?.values ?? [];
  const random = createRandomSource(6);
  const lines = ['player,latency_ms,scale,difficulty,hit'];
  const shots: string[] = [];
  hitsPerPlayer.forEach((hits, player) => {
    for (let shot = 0; shot < 10; shot += 1) shots.push(`p${player},${(30 + 5 * random()).toFixed(1)},1,standard,${shot < hits ? 1 : 0}`);
  });
  for (let index = shots.length - 1; index > 0; index -= 1) {
    const other = Math.floor(random() * (index + 1));
    [shots[index], shots[other]] = [shots[other] as string, shots[index] as string];
  }
  const trials = trialsOf([...lines, ...shots].join('\n'));

  it('groups the attempts of one player in one condition cell into a round (R boxplot.stats, vector D / 10)', () => {
    const summary = summaryOf(trials, { by: ['latency', 'scale'], latencyBins: { kind: 'width', width: 40 } });
    expect(summary.rounds).toBe(8);
    expect(summary.attempts).toBe(80);
    const box = summary.conditions[0]?.accuracy;
    expect([box?.lower_whisker, box?.lower_hinge, box?.median, box?.upper_hinge, box?.upper_whisker]).toEqual([0.2, 0.2, 0.3, 0.7, 1]); // R: 2 2 3 7 10, / 10
    expect(summary.conditions[0]?.mean_accuracy).toBeCloseTo(36 / 80, 15);
  });

  it('forms the same rounds whatever `by` is', () => {
    const width = { kind: 'width', width: 40 } as const;
    expect(summaryOf(trials, { by: [], latencyBins: width }).rounds).toBe(8);
    expect(summaryOf(trials, { by: ['difficulty'], latencyBins: width }).rounds).toBe(8);
  });

  it('splits a player\'s attempts into one round per cell when the bins split them', () => {
    const summary = summaryOf(trials, { by: ['latency'], latencyBins: { kind: 'edges', edges: [32.5] } });
    expect(summary.conditions.map((condition) => condition.rounds).reduce((sum, value) => sum + value, 0)).toBe(summary.rounds);
    expect(summary.rounds).toBeGreaterThan(8);
  });

  it('warns that without a player column a cell is one round', () => {
    const csv = ['latency_ms,scale,difficulty,hit', '10,1,a,1', '10,1,a,0', '10,1,b,1'].join('\n');
    const result = summarizeTrials(trialsOf(csv), { by: ['difficulty'] });
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.warnings.map((issue) => issue.code)).toEqual(['no_player_column']);
    expect(result.value.conditions.map((condition) => [condition.condition.difficulty, condition.rounds, condition.accuracy.median])).toEqual([
      ['a', 1, 0.5],
      ['b', 1, 1],
    ]);
  });
});

describe('summarizeTrials() conditions', () => {
  const csv = [
    'player,latency_ms,scale,difficulty,hits,attempts,weight',
    'a,10,1,elite,5,10,2',
    'a,12,1.5,elite,9,10,2',
    'b,200,1,standard,1,10,1',
    'b,210,1,standard,3,30,1',
    'a,11,1,standard,10,10,1',
  ].join('\n');
  const trials = trialsOf(csv);

  it('orders conditions by the groups of `by`, in the given order, with attempt-weighted means', () => {
    const summary = summaryOf(trials, { by: ['difficulty', 'latency'], latencyBins: { kind: 'width', width: 100 } });
    expect(summary.conditions.map((condition) => condition.condition)).toEqual([
      { difficulty: 'elite', latency: '[0, 100) ms' },
      { difficulty: 'standard', latency: '[0, 100) ms' },
      { difficulty: 'standard', latency: '[200, 300) ms' },
    ]);
    const far = summary.conditions[2];
    expect(far?.hits).toBe(4);
    expect(far?.attempts).toBe(40);
    expect(far?.mean_accuracy).toBe(0.1);
    expect(far?.mean_latency_ms).toBeCloseTo((200 * 10 + 210 * 30) / 40, 12);
    expect(far?.accuracy.mean_of_rounds).toBeCloseTo(0.1, 12);
    expect(summary.groupings.latency?.description).toBe('latency: fixed-width bins of 100 ms, [k·100, (k+1)·100)');
  });

  it('says the weight column is not used', () => {
    const result = summarizeTrials(trials, { by: ['scale'] });
    expect(result.ok && result.warnings.map((issue) => issue.code)).toEqual(['weights_ignored']);
  });

  it('refuses unknown and repeated covariates', () => {
    const unknown = summarizeTrials(trials, { by: ['ping' as never] });
    expect(unknown.ok ? [] : unknown.issues.map((issue) => issue.code)).toEqual(['unknown_factor']);
    const twice = summarizeTrials(trials, { by: ['scale', 'scale'] });
    expect(twice.ok ? [] : twice.issues.map((issue) => issue.code)).toEqual(['duplicate_factor']);
  });
});

describe('parseFactorList()', () => {
  it('reads a comma list, drops repeats and treats none as no covariate', () => {
    expect(parseFactorList('latency, scale,latency')).toEqual({ ok: true, value: ['latency', 'scale'], warnings: [] });
    expect(parseFactorList('none')).toEqual({ ok: true, value: [], warnings: [] });
  });

  it('names the unknown covariate', () => {
    expect(parseFactorList('latency,ping')).toEqual({
      ok: false,
      issues: [{ code: 'unknown_factor', severity: 'error', location: '--by', message: '`--by` requires a comma-separated list of latency, scale, difficulty (or none), got "ping"' }],
    });
  });
});
