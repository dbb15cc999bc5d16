/**
 * The likelihood-ratio refits run on rows merged over the players and the
 * dropped covariate, and the cross-validation folds on their training rows
 * merged over the players (`collapseOver`). References: the deviance
 * difference of the reduced and the full model each fitted by `fitBinomial`
 * on the rows as read (no merging), with their prior weights; for
 * per-attempt rows the Bernoulli deviance, for per-round rows the grouped
 * one (McCullagh & Nelder 1989, §4.4.3: the binomial coefficients and
 * saturated terms cancel in the difference); and each fold refitted by
 * `fitBinomial` on its unmerged training rows, its held-out log loss summed
 * by hand. Invented data, drawn here from a seeded generator.
 */
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Trials } from '../../src/formats/trials-types.js';
import { unwrap } from '../../src/issues.js';
import type { BinomialFitEstimated } from '../../src/model/binomial-fit-types.js';
import { collapseOver, collapseTrials } from '../../src/model/collapse.js';
import { assignFolds } from '../../src/model/cross-validation.js';
import { fitBinomial } from '../../src/model/fit-binomial.js';
import { fitModel } from '../../src/model/fit-model.js';
import { type LinkName, linkFor } from '../../src/model/links.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { createRandomSource } from '../../src/random.js';

/** Per-attempt (`hit`) or per-round (`hits,attempts`) rows with players, prior weights and a numeric difficulty; latency on a 5 ms grid, so points repeat. */
function trialsCsv(shape: 'attempts' | 'rounds', rows: number, seed: number): string {
  const random = createRandomSource(seed);
  const outcome = shape === 'attempts' ? 'hit' : 'hits,attempts';
  const lines = [`player,latency_ms,scale,difficulty,weight,${outcome}`];
  for (let i = 0; i < rows; i += 1) {
    const latency = 5 * Math.floor(40 * random());
    const scale = [1, 1.25, 1.5][i % 3] as number;
    const difficulty = 1 + (i % 4 === 0 ? 1 : 0) + (i % 7 === 0 ? 1 : 0);
    const weight = i % 5 === 0 ? 2 : 1;
    const p = 1 / (1 + Math.exp(-(1.1 - 0.009 * latency + 1.3 * Math.log(scale) - 0.4 * difficulty + 0.003 * latency * Math.log(scale))));
    let result: string;
    if (shape === 'attempts') result = String(random() < p ? 1 : 0);
    else {
      const attempts = 4 + Math.floor(8 * random());
      let hits = 0;
      for (let k = 0; k < attempts; k += 1) if (random() < p) hits += 1;
      result = `${hits},${attempts}`;
    }
    lines.push(`p${i % 40},${latency},${scale},${difficulty},${weight},${result}`);
  }
  return `${lines.join('\n')}\n`;
}

function estimated(fit: ReturnType<typeof fitBinomial>): BinomialFitEstimated {
  if (fit.status !== 'converged') throw new Error(`expected a converged fit, got ${fit.status}`);
  return fit;
}

/** The design columns of the five terms below, per row as read. */
function rowColumns(trials: Trials): Record<string, number[]> {
  const latency = Array.from(trials.latency);
  const logScale = Array.from(trials.scale, Math.log);
  const difficulty = trials.difficulty.kind === 'numeric' ? Array.from(trials.difficulty.values) : [];
  return {
    latency,
    log_scale: logScale,
    difficulty,
    latency_x_log_scale: latency.map((value, i) => value * (logScale[i] as number)),
  };
}

/** The deviance of the terms' columns (a subset of the five below) fitted to the rows as read. */
function directDeviance(trials: Trials, link: LinkName, kept: readonly string[]): number {
  const columns = rowColumns(trials);
  const design = designMatrixFromColumns([interceptColumn(trials.rows), ...kept.map((name) => ({ name, values: columns[name] as number[] }))]);
  const fit = fitBinomial(
    { design, successes: trials.successes, trials: trials.attempts, priorWeights: trials.weight ?? undefined },
    { link, likelihood: trials.shape === 'per_attempt' ? 'bernoulli' : 'grouped' },
  );
  return estimated(fit).deviance;
}

const TERMS = ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'] as const;
const KEPT: Record<string, readonly string[]> = {
  latency: ['log_scale', 'difficulty'],
  scale: ['latency', 'difficulty'],
  difficulty: ['latency', 'log_scale', 'latency_x_log_scale'],
};

describe('likelihood-ratio tests on merged rows', () => {
  for (const shape of ['attempts', 'rounds'] as const) {
    const trials = unwrap(parseTrialsCsv(trialsCsv(shape, 3000, shape === 'attempts' ? 41 : 42), `${shape}.csv`));
    for (const link of ['logit', 'probit', 'cloglog'] as const) {
      it(`gives the deviance differences of fits on the rows as read (${shape}, ${link}, prior weights, numeric difficulty)`, () => {
        const report = fitModel(trials, { terms: [...TERMS], link, folds: 0, baseline: false });
        expect(report.likelihood_ratio_tests.map((test) => test.factor)).toEqual(['latency', 'scale', 'difficulty']);
        const full = directDeviance(trials, link, TERMS.slice(1));
        for (const test of report.likelihood_ratio_tests) {
          if (test.status !== 'tested') throw new Error(`${test.factor} not tested`);
          const reference = directDeviance(trials, link, KEPT[test.factor] as readonly string[]) - full; // two fitBinomial fits on the unmerged rows
          expect(Math.abs(test.statistic - reference)).toBeLessThan(1e-6 * Math.max(1, reference));
        }
      });
    }
  }

  it('merges to one row per distinct point of the covariates kept, with every success and attempt', () => {
    const trials = unwrap(parseTrialsCsv(trialsCsv('attempts', 3000, 43), 'attempts.csv'));
    const data = collapseTrials(trials);
    const merged = collapseOver(data, { latency: false, scale: true, difficulty: true });
    const points = new Set(Array.from({ length: trials.rows }, (_, i) => `${trials.scale[i]}|${trials.difficulty.kind === 'numeric' ? trials.difficulty.values[i] : 0}|${trials.weight?.[i]}`));
    expect(merged.rows).toBe(points.size);
    expect(merged.player).toBeNull();
    expect(merged.sourceRows).toBe(data.sourceRows);
    const total = (values: ArrayLike<number>) => Array.from(values).reduce((sum, value) => sum + value, 0);
    expect(total(merged.attempts)).toBe(total(trials.attempts));
    expect(total(merged.successes)).toBe(total(trials.successes));
    expect(new Set(merged.latency)).toEqual(new Set([0]));
  });
});

describe('cross-validation folds on merged rows', () => {
  for (const shape of ['attempts', 'rounds'] as const) {
    it(`give the held-out log loss of each fold refitted on its unmerged rows (${shape}, probit, prior weights)`, () => {
      const trials = unwrap(parseTrialsCsv(trialsCsv(shape, 2000, shape === 'attempts' ? 44 : 45), `${shape}.csv`));
      const report = fitModel(trials, { terms: [...TERMS], link: 'probit', folds: 4, seed: 7, likelihoodRatioTests: false, baseline: false });
      // The folds' rows: the same seeded assignment of players, mapped from the grouped rows back to the rows as read.
      const grouped = collapseTrials(trials);
      const foldOfPlayer = new Map<number, number>();
      const assignment = assignFolds(grouped, 4, 7);
      for (let g = 0; g < grouped.rows; g += 1) foldOfPlayer.set(grouped.player?.[g] as number, assignment.fold[g] as number);
      const columns = rowColumns(trials);
      const names = TERMS.slice(1);
      const row = (i: number) => [1, ...names.map((name) => (columns[name] as number[])[i] as number)];
      let loss = 0;
      let weight = 0;
      for (let fold = 0; fold < 4; fold += 1) {
        const train: number[] = [];
        const test: number[] = [];
        for (let i = 0; i < trials.rows; i += 1) (foldOfPlayer.get(trials.player?.codes[i] as number) === fold ? test : train).push(i);
        const design = designMatrixFromColumns(['a', ...names].map((name, j) => ({ name, values: train.map((i) => row(i)[j] as number) })));
        const fit = estimated(
          fitBinomial(
            { design, successes: train.map((i) => trials.successes[i] as number), trials: train.map((i) => trials.attempts[i] as number), priorWeights: train.map((i) => trials.weight?.[i] ?? 1) },
            { link: 'probit' },
          ),
        );
        for (const i of test) {
          const eta = row(i).reduce((sum, value, j) => sum + value * (fit.coefficients[j] as number), 0);
          const p = Math.min(1 - 1e-15, Math.max(1e-15, linkFor('probit').inverse(eta)));
          const prior = trials.weight?.[i] ?? 1;
          const hits = trials.successes[i] as number;
          const tries = trials.attempts[i] as number;
          loss -= prior * (hits * Math.log(p) + (tries - hits) * Math.log1p(-p));
          weight += prior * tries;
        }
      }
      expect(report.cross_validation?.log_loss).toBeCloseTo(loss / weight, 9); // each fold refitted by hand with fitBinomial on unmerged rows
    });
  }
});
