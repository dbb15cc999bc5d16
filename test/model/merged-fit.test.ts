/**
 * The full fit of a per-attempt file with players runs its IRLS on the rows
 * merged over the players and sweeps the players' rows once for the fitted
 * values and the CR1 score sums (`merged-fit.ts`). Reference: `fitBinomial`
 * on the players' rows themselves, with the clusters (the fit the report
 * made before; it is checked against R's glm and sandwich elsewhere), to
 * the precision issue 18 asks of a fit on counts against the rows:
 * estimates 1e-9 relative, model and cluster-robust SEs 1e-7. Invented data
 * from a seeded generator, latency on a 5 ms grid so that players share
 * points.
 */
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import { unwrap } from '../../src/issues.js';
import { collapseOver, groupTrials } from '../../src/model/collapse.js';
import { buildDesign } from '../../src/model/design.js';
import { calibrationTable } from '../../src/model/cross-validation.js';
import { fitModel } from '../../src/model/fit-model.js';
import { fitFullModel } from '../../src/model/merged-fit.js';
import { prepare, runBinomial } from '../../src/model/prepared-fit.js';
import { createRandomSource } from '../../src/random.js';

function attemptsCsv(rows: number, seed: number, weights: boolean): string {
  const random = createRandomSource(seed);
  const lines = [`player,latency_ms,scale,difficulty,${weights ? 'weight,' : ''}hit`];
  for (let i = 0; i < rows; i += 1) {
    const player = i % 60;
    const latency = 5 * Math.floor(2 + (player % 20) + 6 * random());
    const scale = [1, 1.25, 1.5][i % 3] as number;
    const level = ['rookie', 'veteran', 'elite'][(i >> 2) % 3] as string;
    const skill = ((player % 7) - 3) * 0.05;
    const p = 1 / (1 + Math.exp(-(1.2 - 0.004 * latency + 1.4 * Math.log(scale) - (level === 'elite' ? 0.7 : level === 'veteran' ? 0.3 : 0) + skill)));
    lines.push(`p${player},${latency},${scale},${level},${weights ? `${i % 9 === 0 ? 2 : 1},` : ''}${random() < p ? 1 : 0}`);
  }
  return `${lines.join('\n')}\n`;
}

const relative = (value: number, reference: number) => Math.abs(value - reference) / Math.max(Math.abs(reference), 1e-300);

describe('the full fit on rows merged over the players', () => {
  for (const weights of [false, true]) {
    for (const link of ['logit', 'probit', 'cloglog'] as const) {
      it(`equals the fit of the players' rows (${link}${weights ? ', prior weights' : ''}): estimates, SEs, CR1, likelihood, fitted values`, () => {
        const trials = groupTrials(unwrap(parseTrialsCsv(attemptsCsv(6000, 17, weights), 'attempts.csv')));
        const prepared = prepare(trials, { link });
        const design = buildDesign(prepared.data, prepared.terms, prepared.coding);
        // The merge must engage here (at most four rows in five), or this checks the fallback.
        expect(collapseOver(prepared.data, { latency: true, scale: true, difficulty: true }).rows).toBeLessThan(0.8 * prepared.data.rows);
        const merged = fitFullModel(prepared, () => design);
        const direct = runBinomial(prepared, prepared.data, design);
        if (merged.status !== 'converged' || direct.status !== 'converged') throw new Error('expected converged fits');
        direct.coefficients.forEach((value, j) => {
          expect(relative(merged.coefficients[j] as number, value)).toBeLessThan(1e-9);
          expect(relative(merged.standardErrors[j] as number, direct.standardErrors[j] as number)).toBeLessThan(1e-7);
          expect(relative(merged.robust?.standardErrors[j] as number, direct.robust?.standardErrors[j] as number)).toBeLessThan(1e-7);
        });
        expect(merged.robust?.clusters).toBe(direct.robust?.clusters);
        expect(relative(merged.deviance, direct.deviance)).toBeLessThan(1e-12);
        expect(relative(merged.nullDeviance, direct.nullDeviance)).toBeLessThan(1e-12);
        expect([merged.dfResidual, merged.observationCount]).toEqual([direct.dfResidual, direct.observationCount]);
        expect(relative(merged.aic, direct.aic)).toBeLessThan(1e-12);
        expect(relative(merged.brierScore, direct.brierScore)).toBeLessThan(1e-12);
        expect(relative(merged.tjurR2 as number, direct.tjurR2 as number)).toBeLessThan(1e-9);
        // The calibration table, from each row's fitted probability as the sweep reaches it.
        const expected = calibrationTable(prepared.data, direct.fitted);
        expect(merged.calibration.map((bin) => bin.attempts)).toEqual(expected.map((bin) => bin.attempts));
        merged.calibration.forEach((bin, b) => {
          expect(Math.abs((bin.mean_predicted ?? 0) - (expected[b]?.mean_predicted ?? 0))).toBeLessThan(1e-12);
          expect(bin.observed).toBe(expected[b]?.observed);
        });
      });
    }
  }

  it("never builds the players' design matrix when the rows merge (the sweep computes each row's entries)", () => {
    const trials = groupTrials(unwrap(parseTrialsCsv(attemptsCsv(6000, 19, false), 'attempts.csv')));
    const prepared = prepare(trials, {});
    const fit = fitFullModel(prepared, () => {
      throw new Error('the full design was built');
    });
    expect(fit.status).toBe('converged');
    // Every attempt of the players' rows in the calibration table (6,000, unit weights).
    if (fit.status === 'converged') expect(fit.calibration.reduce((sum, bin) => sum + bin.attempts, 0)).toBe(prepared.data.attempts.reduce((sum, value) => sum + value, 0));
  });

  it('gives the report the same figures (to the fit precision) whether or not the rows merge, and leaves per-round files to the rounds', () => {
    const trials = groupTrials(unwrap(parseTrialsCsv(attemptsCsv(6000, 18, false), 'attempts.csv')));
    const report = fitModel(trials, { folds: 0, likelihoodRatioTests: false, baseline: false });
    const prepared = prepare(trials, {});
    const direct = runBinomial(prepared, prepared.data, buildDesign(prepared.data, prepared.terms, prepared.coding));
    if (direct.status !== 'converged') throw new Error('expected a converged fit');
    report.coefficients.forEach((row, j) => {
      expect(relative(row.estimate, direct.coefficients[j] as number)).toBeLessThan(1e-9);
      expect(relative(row.robust?.std_error as number, direct.robust?.standardErrors[j] as number)).toBeLessThan(1e-7);
    });
    const rounds = groupTrials(unwrap(parseTrialsCsv('player,latency_ms,scale,difficulty,hits,attempts\na,10,1,x,3,10\nb,10,1,x,5,10\na,20,1.5,y,6,10\nb,30,1,y,2,10\nc,20,1.5,x,7,12\nc,15,1,y,4,11\n', 'rounds.csv')));
    const roundsPrepared = prepare(rounds, { terms: ['intercept', 'latency', 'log_scale'] });
    const roundsDesign = buildDesign(roundsPrepared.data, roundsPrepared.terms, roundsPrepared.coding);
    const roundsFit = runBinomial(roundsPrepared, roundsPrepared.data, roundsDesign);
    if (roundsFit.status !== 'converged') throw new Error('expected a converged fit');
    const { fitted, ...roundsRest } = roundsFit;
    expect(fitFullModel(roundsPrepared, () => roundsDesign)).toEqual({ ...roundsRest, calibration: calibrationTable(roundsPrepared.data, fitted) });
  });
});
