import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { betweenVariance } from '../../src/stats/between-variance.js';
import { ROOT } from '../helpers/demo.js';

/** Log risk ratios and their variances of the BCG trials, as metafor's escalc(measure = "RR") computes them. */
function bcgLogRiskRatios(): { estimates: number[]; variances: number[] } {
  const lines = readFileSync(join(ROOT, 'test', 'fixtures', 'plan', 'bcg-trials.csv'), 'utf8').trim().split('\n').slice(1);
  const estimates: number[] = [];
  const variances: number[] = [];
  for (const line of lines) {
    const [tpos, tneg, cpos, cneg] = line.split(',').slice(3).map(Number) as [number, number, number, number];
    estimates.push(Math.log(tpos / (tpos + tneg) / (cpos / (cpos + cneg))));
    variances.push(1 / tpos - 1 / (tpos + tneg) + 1 / cpos - 1 / (cpos + cneg));
  }
  return { estimates, variances };
}

describe('betweenVariance()', () => {
  it('gives metafor\'s DerSimonian-Laird tau^2 = 0.3088 and Q = 152.2330 for the BCG trials', () => {
    const { estimates, variances } = bcgLogRiskRatios();
    const result = betweenVariance(estimates, variances);
    expect(result.units).toBe(13);
    expect(result.q).toBeCloseTo(152.233, 3); // metafor rma(method = "DL") on dat.bcg (Colditz et al. 1994), from memory: Q(df = 12) = 152.2330
    expect(result.variance).toBeCloseTo(0.3088, 4); // the same output: tau^2 = 0.3088
  });

  it('truncates at 0 when the estimates vary less than their sampling variances say', () => {
    expect(betweenVariance([0.1, 0.1001, 0.0999], [0.01, 0.01, 0.01]).variance).toBe(0);
  });

  it('refuses fewer than two units and variances that are not above 0', () => {
    expect(() => betweenVariance([1], [1])).toThrow(RangeError);
    expect(() => betweenVariance([1, 2], [1, 0])).toThrow(RangeError);
  });
});
