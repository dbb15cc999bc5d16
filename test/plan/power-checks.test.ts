/**
 * The size study's simulated power against closed-form power from the
 * literature: with no player spread, the product's own fit (fitModel, CR1 by
 * player) and Wald test on simulated playtests should reject as often as the
 * textbook formulas say.
 */
import { describe, expect, it } from 'vitest';
import type { AssumedModel } from '../../src/plan/assumed-model.js';
import { crossConditions } from '../../src/plan/conditions.js';
import { type SimulationPlan, readRecord, simulateStudies } from '../../src/plan/simulate-studies.js';
import { hsiehPower, hsiehSampleSize, twoProportionPower, twoProportionSampleSize } from './reference-power.js';

const logit = (p: number) => Math.log(p / (1 - p));

/** A plan for the latency term alone: one scale, one difficulty, no player spread, fitted with intercept + latency. */
function latencyOnly(latencies: number[], line: { base: number; basePerMs: number }, attempts: number, seed: number): SimulationPlan {
  const truth: AssumedModel = { source: 'entered_effects', link: 'logit', scaleForm: 'log', lines: [{ ...line, scaleSlope: 0, scaleSlopePerMs: 0 }], terms: ['intercept', 'latency'] };
  return {
    difficulty: ['standard'],
    conditions: crossConditions({ latency_ms: latencies, scale: [1], difficulty: ['standard'] }),
    attempts,
    seed,
    playerSd: 0,
    truth,
    settings: { link: 'logit', scaleForm: 'log', terms: ['intercept', 'latency'], alpha: 0.05, atLatency: latencies[1] as number, atDifficulty: 'standard', referenceLatency: 0, trueScale: 1 },
  };
}

function simulatedPower(plan: SimulationPlan, participants: number, repetitions: number, studies: number): { power: number; se: number } {
  const records = simulateStudies(plan, participants, repetitions, 0, studies);
  let detected = 0;
  for (let index = 0; index < studies; index += 1) if (readRecord(records, index).latencyDetected) detected += 1;
  const power = detected / studies;
  return { power, se: Math.sqrt((power * (1 - power)) / studies) };
}

describe('the reference formulas', () => {
  it('reproduce R power.prop.test(n = 50, p1 = 0.5, p2 = 0.75) without the correction', () => {
    expect(twoProportionPower(0.5, 0.75, 50, 0.05, false)).toBeCloseTo(0.7401659, 6); // R 4.x power.prop.test documentation example, power 0.7401659 (from memory; the arithmetic is the same formula)
  });

  it('invert Fleiss, Levin and Paik\'s corrected sample size exactly', () => {
    const n = twoProportionSampleSize(0.6, 0.5, 0.8, 0.05); // Fleiss, Levin and Paik (2003), chapter 4, continuity-corrected n
    expect(twoProportionPower(0.6, 0.5, n, 0.05)).toBeCloseTo(0.8, 10);
    // The correction adds about 2 / |p2 - p1| per group (Fleiss, Tytun and Ury 1980).
    const classical = (1.959963984540054 * Math.sqrt(2 * 0.55 * 0.45) + 0.8416212335729143 * Math.sqrt(0.24 + 0.25)) ** 2 / 0.01;
    expect(n - classical).toBeGreaterThan(18);
    expect(n - classical).toBeLessThan(21);
  });

  it("give Hsieh, Bloch and Larsen's worked example: 317 trials for p1 = 0.5, beta* = 0.405, power 0.95", () => {
    expect(Math.ceil(hsiehSampleSize(0.5, 0.405, 0.95, 0.05))).toBe(317); // Hsieh et al. (1998), Table II balanced design, as quoted in R powerMediation's SSizeLogisticCon documentation
    expect(hsiehPower(317, 0.5, 0.405, 0.05)).toBeCloseTo(0.95, 2);
  });
});

describe('simulated power (product fit, CR1 Wald test) against closed forms', () => {
  it('matches the two-proportion power of Fleiss, Levin and Paik (continuity-corrected) within Monte Carlo error for two latency levels', () => {
    // 60 players x 1 round per level x 40 attempts: 2,400 attempts per latency level.
    const p1 = 0.6;
    const p2 = 0.57;
    const plan = latencyOnly([0, 100], { base: logit(p1), basePerMs: (logit(p2) - logit(p1)) / 100 }, 40, 11);
    const { power, se } = simulatedPower(plan, 60, 1, 2000);
    const expected = twoProportionPower(p1, p2, 60 * 40, 0.05); // Fleiss, Levin and Paik (2003), ch. 4, with continuity correction
    expect(expected).toBeGreaterThan(0.4);
    expect(expected).toBeLessThan(0.8);
    // Three Monte Carlo standard errors; at 2,400 per group the correction moves the power by about one.
    expect(Math.abs(power - expected)).toBeLessThan(3 * se);
  });

  it('is near the level alpha when latency has no effect (the test\'s size, within Monte Carlo error)', () => {
    const plan = latencyOnly([0, 100], { base: logit(0.6), basePerMs: 0 }, 40, 12);
    const { power, se } = simulatedPower(plan, 60, 1, 2000);
    expect(Math.abs(power - 0.05)).toBeLessThan(3 * Math.max(se, Math.sqrt((0.05 * 0.95) / 2000)));
  });

  it('matches Hsieh, Bloch and Larsen (1998) for a continuous latency term within the approximation\'s accuracy', () => {
    // Six equally used latency levels 0..250 ms: the covariate's standard deviation is 50 sqrt(35/12).
    const latencies = [0, 50, 100, 150, 200, 250];
    const sd = 50 * Math.sqrt(35 / 12);
    const slope = -0.0012;
    const atMean = 0.6;
    const plan = latencyOnly(latencies, { base: logit(atMean) - slope * 125, basePerMs: slope }, 20, 13);
    const { power } = simulatedPower(plan, 20, 1, 1500);
    const expected = hsiehPower(20 * 6 * 20, atMean, slope * sd, 0.05); // Hsieh et al. (1998), formula (1)
    expect(expected).toBeGreaterThan(0.5);
    expect(expected).toBeLessThan(0.85);
    // Tolerance 0.05 (ours): formula (1) is a first-order approximation at the covariate's mean, which Hsieh et al. compare with simulated power; the Monte Carlo error here is about 0.012.
    expect(Math.abs(power - expected)).toBeLessThan(0.05);
  });
});
