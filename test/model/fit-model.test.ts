import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { erf } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { parseTrialsCsv } from '../../src/formats/trials-csv.js';
import type { Trials } from '../../src/formats/trials-types.js';
import { unwrap } from '../../src/issues.js';
import { compileModel } from '../../src/model/compile.js';
import { collapseTrials, groupTrials } from '../../src/model/collapse.js';
import type { BinomialFitEstimated } from '../../src/model/binomial-fit-types.js';
import { fitBinomial } from '../../src/model/fit-binomial.js';
import { fitModel } from '../../src/model/fit-model.js';
import { toModelFile } from '../../src/model/to-model-file.js';
import { designMatrixFromColumns, interceptColumn } from '../../src/numeric/design-matrix.js';
import { createRandomSource } from '../../src/random.js';
import { GROUND_TRUTH } from '../../tools/demo-scenario.js';
import { MATCHES } from '../helpers/demo.js';

const demoText = readFileSync(join(MATCHES, 'playtest-trials.csv'), 'utf8');
const demo = unwrap(parseTrialsCsv(demoText, 'playtest-trials.csv'));

function estimated(fit: ReturnType<typeof fitBinomial>): BinomialFitEstimated {
  if (fit.status !== 'converged') throw new Error(`expected convergence, got ${fit.status}`);
  return fit;
}

/** Per-attempt rows from a seeded logistic model: latency, log scale, two difficulty levels. */
function attemptsCsv(rows: number, seed: number, options: { players?: number; scaleEffect?: number } = {}): string {
  const random = createRandomSource(seed);
  const lines = [`${options.players === undefined ? '' : 'player,'}latency_ms,scale,difficulty,hit`];
  const scales = [1, 1.5, 2];
  for (let i = 0; i < rows; i += 1) {
    const latency = Math.round(200 * random() * 100) / 100;
    const scale = scales[i % 3] as number;
    const hard = i % 2 === 1;
    const predictor = 0.8 - 0.01 * latency + (options.scaleEffect ?? 1.2) * Math.log(scale) - (hard ? 0.6 : 0);
    const hit = random() < 1 / (1 + Math.exp(-predictor)) ? 1 : 0;
    const player = options.players === undefined ? '' : `p${i % options.players},`;
    lines.push(`${player}${latency},${scale},${hard ? 'hard' : 'easy'},${hit}`);
  }
  return `${lines.join('\n')}\n`;
}

describe('fitModel() on the demo playtest', () => {
  const report = fitModel(demo);

  it('recovers every ground-truth coefficient of tools/demo-scenario.ts within its robust 95% interval', () => {
    // The demo draws a player skill offset (SD 0.15) that the model leaves out; this attenuates the
    // logit coefficients slightly and correlates rows within a player, so the honest intervals are
    // the CR1 ones by player (36 clusters).
    expect(report.status).toBe('converged');
    expect(report.covariance_kind).toBe('cluster_robust_cr1');
    for (const row of report.coefficients) {
      const truth = GROUND_TRUTH.coefficients[row.name] as number; // tools/demo-scenario.ts ground truth
      expect(row.robust).not.toBeNull();
      expect(truth).toBeGreaterThanOrEqual(row.robust?.ci_lower as number);
      expect(truth).toBeLessThanOrEqual(row.robust?.ci_upper as number);
    }
  });

  it('writes a model file that compiles, with the training ranges and the SHA-256 it was given', () => {
    const model = unwrap(toModelFile(report, { file: 'playtest-trials.csv', rows: demo.rows, sha256: 'a'.repeat(64) }));
    expect(compileModel(model).ok).toBe(true);
    expect(model.training.latency_ms.min).toBe(Math.min(...demo.latency));
    expect(model.training.latency_ms.max).toBe(Math.max(...demo.latency));
    expect(model.training.difficulty).toEqual(['standard', 'veteran', 'elite']);
    expect(model.coefficients.covariance_kind).toBe('cluster_robust_cr1');
    expect(model.provenance).toEqual({ file: 'playtest-trials.csv', rows: 3240, sha256: 'a'.repeat(64) });
  });

  it('writes no model file with a number JSON cannot hold, and names where it is', () => {
    const broken = { ...report, statistics: { ...(report.statistics as NonNullable<typeof report.statistics>), aic: Number.NaN } };
    const written = toModelFile(broken, { file: 'playtest-trials.csv', rows: demo.rows, sha256: 'a'.repeat(64) });
    expect(written.ok).toBe(false);
    if (!written.ok) expect(written.issues[0]).toMatchObject({ code: 'not_writable', location: 'playtest-trials.csv:fit.statistics.aic' });
  });

  it('is what the bundled matches/model.json holds: a real fit of the bundled trials', () => {
    const bundled = JSON.parse(readFileSync(join(MATCHES, 'model.json'), 'utf8')) as {
      coefficients: { estimates: number[]; covariance_kind: string };
      provenance: { sha256: string; rows: number };
    };
    expect(bundled.provenance.sha256).toBe(createHash('sha256').update(demoText).digest('hex')); // node:crypto SHA-256 of the CSV bytes
    expect(bundled.provenance.rows).toBe(3240);
    expect(bundled.coefficients.covariance_kind).toBe('cluster_robust_cr1');
    bundled.coefficients.estimates.forEach((value, j) => expect(value).toBeCloseTo(report.coefficients[j]?.estimate as number, 10)); // this fit, written by `lagparity fit`
  });

  it('warns that 36 players are fewer than the 40 that CR1 errors need', () => {
    expect(report.warnings.map((issue) => issue.code)).toContain('few_clusters');
  });

  it('gives likelihood-ratio statistics equal to the deviance difference of two independent fitBinomial calls', () => {
    const difficulty = demo.difficulty.kind === 'levels' ? demo.difficulty : null;
    if (difficulty === null) throw new Error('demo difficulty is levels');
    const level = (name: string) => Array.from(difficulty.codes, (code) => (difficulty.levels[code] === name ? 1 : 0));
    const logScale = Array.from(demo.scale, Math.log);
    const latency = Array.from(demo.latency);
    const columns = {
      latency: { name: 'latency', values: latency },
      logScale: { name: 'log_scale', values: logScale },
      veteran: { name: 'veteran', values: level('veteran') },
      elite: { name: 'elite', values: level('elite') },
      interaction: { name: 'lxs', values: latency.map((value, i) => value * (logScale[i] as number)) },
    };
    const fitWith = (...chosen: { name: string; values: number[] }[]) =>
      estimated(fitBinomial({ design: designMatrixFromColumns([interceptColumn(demo.rows), ...chosen]), successes: demo.successes, trials: demo.attempts }));
    const full = fitWith(columns.latency, columns.logScale, columns.veteran, columns.elite, columns.interaction);
    const withoutScale = fitWith(columns.latency, columns.veteran, columns.elite);
    const withoutDifficulty = fitWith(columns.latency, columns.logScale, columns.interaction);
    const scaleTest = report.likelihood_ratio_tests.find((test) => test.factor === 'scale');
    const difficultyTest = report.likelihood_ratio_tests.find((test) => test.factor === 'difficulty');
    expect(scaleTest?.status === 'tested' && scaleTest.statistic).toBeCloseTo(withoutScale.deviance - full.deviance, 6); // deviance difference of two fitBinomial fits
    expect(difficultyTest?.status === 'tested' && difficultyTest.df).toBe(2);
    expect(difficultyTest?.status === 'tested' && difficultyTest.statistic).toBeCloseTo(withoutDifficulty.deviance - full.deviance, 6); // deviance difference of two fitBinomial fits
  });

  it('cross-validates by whole players: the same held-out log loss as refitting each fold by hand', () => {
    const cv = report.cross_validation;
    expect(cv?.held_out).toBe('players');
    // Independent recomputation: shuffle the 36 players with the same seeded Fisher-Yates, deal into
    // 5 folds, refit on the other folds with fitBinomial, score the held-out rounds.
    const random = createRandomSource(1);
    const order = Array.from({ length: 36 }, (_, i) => i);
    for (let i = 35; i > 0; i -= 1) {
      const j = Math.floor(random() * (i + 1));
      [order[i], order[j]] = [order[j] as number, order[i] as number];
    }
    const foldOf = new Map(order.map((player, position) => [player, position % 5]));
    const codes = demo.player?.codes ?? new Int32Array();
    const difficulty = demo.difficulty.kind === 'levels' ? demo.difficulty : null;
    let loss = 0;
    let attempts = 0;
    for (let fold = 0; fold < 5; fold += 1) {
      const train: number[] = [];
      const test: number[] = [];
      for (let i = 0; i < demo.rows; i += 1) (foldOf.get(codes[i] as number) === fold ? test : train).push(i);
      const row = (i: number) => {
        const ls = Math.log(demo.scale[i] as number);
        const level = difficulty?.levels[difficulty.codes[i] as number];
        return [1, demo.latency[i] as number, ls, level === 'veteran' ? 1 : 0, level === 'elite' ? 1 : 0, (demo.latency[i] as number) * ls];
      };
      const names = ['a', 'b', 'c', 'd', 'e', 'f'];
      const design = designMatrixFromColumns(names.map((name, j) => ({ name, values: train.map((i) => row(i)[j] as number) })));
      const fit = estimated(fitBinomial({ design, successes: train.map((i) => demo.successes[i] as number), trials: train.map((i) => demo.attempts[i] as number) }));
      for (const i of test) {
        const eta = row(i).reduce((sum, value, j) => sum + value * (fit.coefficients[j] as number), 0);
        const p = 1 / (1 + Math.exp(-eta));
        const hits = demo.successes[i] as number;
        const tries = demo.attempts[i] as number;
        loss -= hits * Math.log(p) + (tries - hits) * Math.log(1 - p);
        attempts += tries;
      }
    }
    expect(cv?.log_loss).toBeCloseTo(loss / attempts, 9); // held-out log loss recomputed by hand with fitBinomial per fold
    expect(cv?.attempts).toBe(64800);
  });

  it('has a calibration table of ten bins covering every attempt', () => {
    expect(report.calibration).toHaveLength(10);
    expect(report.calibration.reduce((sum, bin) => sum + bin.attempts, 0)).toBe(64800);
  });

  it('reports the least-squares baseline with R² between 0 and 1', () => {
    expect(report.baseline?.r_squared).toBeGreaterThan(0);
    expect(report.baseline?.r_squared).toBeLessThan(1);
  });
});

describe('fitModel() on grouped trials', () => {
  it('gives the same report from groupTrials(trials) as from the trials, per-attempt and per-round', () => {
    const rounds = unwrap(parseTrialsCsv('latency_ms,scale,difficulty,hits,attempts,player\n10,1,1,3,10,a\n20,1.5,2,6,10,b\n30,2,1,8,10,a\n40,1,2,2,10,b\n50,1.5,1,7,12,c\n15,2,2,9,11,c\n', 'rounds.csv'));
    for (const trials of [demo, rounds]) {
      const options = { folds: trials === demo ? 5 : 0, seed: 3 };
      expect(fitModel(groupTrials(trials), options)).toEqual(fitModel(trials, options));
    }
  });
});

describe('chi-square p of the likelihood-ratio tests', () => {
  it('equals 1 - erf(sqrt(x / 2)) from mathjs for one degree of freedom', () => {
    const trials = unwrap(parseTrialsCsv(attemptsCsv(3000, 3), 'attempts.csv'));
    const report = fitModel(trials, { terms: ['intercept', 'latency', 'log_scale', 'difficulty'], folds: 0 });
    for (const test of report.likelihood_ratio_tests) {
      if (test.status !== 'tested') throw new Error('tested');
      expect(test.df).toBe(1);
      expect(test.p_value).toBeCloseTo(1 - (erf(Math.sqrt(test.statistic / 2)) as number), 12); // mathjs erf: chi-square(1) upper tail = erfc(sqrt(x/2)) (Abramowitz & Stegun 26.4.4)
    }
  });

  it('equals exp(-x / 2) for two degrees of freedom', () => {
    const report = fitModel(demo, { folds: 0 });
    const latency = report.likelihood_ratio_tests.find((test) => test.factor === 'latency');
    if (latency?.status !== 'tested') throw new Error('tested');
    expect(latency.df).toBe(2);
    // Abramowitz & Stegun 26.4.5 for nu = 2: Q = exp(-chi^2 / 2); the statistic is large, so compare logs.
    expect(latency.p_value).toBe(Math.exp(-latency.statistic / 2));
  });
});

describe('fitModel() on per-attempt rows', () => {
  const text = attemptsCsv(4000, 11, { players: 50 });
  const trials = unwrap(parseTrialsCsv(text, 'attempts.csv'));

  it('collapses identical rows and gives the same coefficients as fitBinomial on the uncollapsed 0/1 rows', () => {
    const report = fitModel(trials, { folds: 0, likelihoodRatioTests: false, cluster: 'none' });
    const logScale = Array.from(trials.scale, Math.log);
    const hard = Array.from(trials.difficulty.kind === 'levels' ? trials.difficulty.codes : [], (code) => (code === 1 ? 1 : 0));
    const latency = Array.from(trials.latency);
    const design = designMatrixFromColumns([
      interceptColumn(trials.rows),
      { name: 'latency', values: latency },
      { name: 'log_scale', values: logScale },
      { name: 'hard', values: hard },
      { name: 'lxs', values: latency.map((value, i) => value * (logScale[i] as number)) },
    ]);
    const direct = estimated(fitBinomial({ design, successes: trials.successes, trials: trials.attempts }, { likelihood: 'bernoulli' }));
    report.coefficients.forEach((row, j) => {
      expect(row.estimate).toBeCloseTo(direct.coefficients[j] as number, 10); // fitBinomial on the 0/1 rows
      expect(row.std_error).toBeCloseTo(direct.standardErrors[j] as number, 10); // fitBinomial on the 0/1 rows
    });
    expect(report.statistics?.deviance).toBeCloseTo(direct.deviance, 8); // Bernoulli deviance = -2 log L of the 0/1 rows
    expect(report.likelihood).toBe('bernoulli');
  });

  it('collapses rows at one covariate point into counts', () => {
    const repeated = unwrap(parseTrialsCsv('latency_ms,scale,difficulty,hit\n20,1,a,1\n20,1,a,0\n20,1,a,1\n30,1,a,0\n', 'r.csv'));
    const collapsed = collapseTrials(repeated);
    expect(collapsed.rows).toBe(2);
    expect(Array.from(collapsed.successes)).toEqual([2, 0]);
    expect(Array.from(collapsed.attempts)).toEqual([3, 1]);
  });

  it('says the model cannot be used for compensation when the scale effect decreases', () => {
    const falling = unwrap(parseTrialsCsv(attemptsCsv(4000, 5, { scaleEffect: -1 }), 'falling.csv'));
    const report = fitModel(falling, { folds: 0 });
    expect(report.usable_for_compensation).toBe(false);
    const issue = report.warnings.find((entry) => entry.code === 'scale_not_increasing');
    expect(issue?.message).toMatch(/cannot be used for compensation/);
  });

  it('holds out rows at random, with a warning, when there is no player column', () => {
    const noPlayers = unwrap(parseTrialsCsv(attemptsCsv(2000, 9), 'rows.csv'));
    const report = fitModel(noPlayers, { folds: 4 });
    expect(report.cross_validation?.held_out).toBe('rows');
    expect(report.warnings.map((entry) => entry.code)).toContain('folds_by_row');
  });
});

describe('fitModel() statuses', () => {
  const parse = (text: string): Trials => unwrap(parseTrialsCsv(text, 'case.csv'));

  it('names `difficulty` when every row has one difficulty level', () => {
    const report = fitModel(parse('latency_ms,scale,difficulty,hits,attempts\n10,1,easy,5,10\n50,1.5,easy,4,10\n90,2,easy,3,10\n30,1.5,easy,6,10\n'));
    expect(report.status).toBe('rank_deficient');
    expect(report.aliased_terms).toEqual(['difficulty']);
    expect(report.warnings[0]?.location).toBe('case.csv:difficulty');
  });

  it('names the scale terms when every row is at one scale', () => {
    const report = fitModel(parse('latency_ms,scale,difficulty,hits,attempts\n10,1,easy,5,10\n50,1,hard,4,10\n90,1,easy,3,10\n30,1,hard,6,10\n'));
    expect(report.status).toBe('rank_deficient');
    expect(report.aliased_terms).toEqual(['log_scale', 'latency_x_log_scale']);
  });

  it('reports separation as a status, not an exception', () => {
    const rows = ['latency_ms,scale,difficulty,hit'];
    for (let i = 0; i < 40; i += 1) rows.push(`${i * 5},${1 + (i % 3) / 2},${i % 2 === 0 ? 'a' : 'b'},${i < 20 ? 1 : 0}`);
    const report = fitModel(parse(`${rows.join('\n')}\n`), { terms: ['intercept', 'latency', 'log_scale', 'difficulty'], folds: 0 });
    expect(report.status).toBe('separation');
    expect(report.coefficients).toEqual([]);
  });

  it('throws for options that are not valid, with the option named', () => {
    expect(() => fitModel(demo, { reference: 'nightmare' })).toThrow(/`reference` requires one of the levels/);
    expect(() => fitModel(demo, { folds: 1 })).toThrow(/`folds` requires/);
  });
});
