import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createRandomSource } from '../../src/random.js';
import { duelOutcome, duelWinProbability, type DuelOutcome, type VolleyOrder } from '../../src/stats/duel.js';

/**
 * Independent reference: a dynamic program over the states (hits of A, hits of B),
 * written from the rules of the race, not from the negative-binomial sums. A round
 * (or pair of turns) in which nobody hits returns to the same state, so each state's
 * value is the average over the other transitions, weighted by their probabilities
 * renormalised by 1 - P(nobody hits). Requires pA + pB > 0.
 */
function dynamicProgramSimultaneous(pA: number, pB: number, hitsToWin: number): DuelOutcome {
  const qA = 1 - pA;
  const qB = 1 - pB;
  const leave = 1 - qA * qB;
  const size = hitsToWin + 1;
  // value[a * size + b] for a, b in 0..k; terminal rows/columns filled first.
  const aWins = new Float64Array(size * size);
  const bWins = new Float64Array(size * size);
  const tie = new Float64Array(size * size);
  const at = (a: number, b: number): number => a * size + b;
  for (let other = 0; other < hitsToWin; other += 1) {
    aWins[at(hitsToWin, other)] = 1;
    bWins[at(other, hitsToWin)] = 1;
  }
  tie[at(hitsToWin, hitsToWin)] = 1;
  for (let a = hitsToWin - 1; a >= 0; a -= 1) {
    for (let b = hitsToWin - 1; b >= 0; b -= 1) {
      const both = (pA * pB) / leave;
      const onlyA = (pA * qB) / leave;
      const onlyB = (qA * pB) / leave;
      for (const table of [aWins, bWins, tie]) {
        table[at(a, b)] =
          both * (table[at(a + 1, b + 1)] ?? 0) + onlyA * (table[at(a + 1, b)] ?? 0) + onlyB * (table[at(a, b + 1)] ?? 0);
      }
    }
  }
  return { aWins: aWins[0] ?? Number.NaN, bWins: bWins[0] ?? Number.NaN, tie: tie[0] ?? Number.NaN };
}

/** A shoots, then B, and so on. aFirst[a][b]: P(A wins | A to shoot); bNext[a][b]: P(A wins | B to shoot). */
function dynamicProgramAlternating(pA: number, pB: number, hitsToWin: number): number {
  const qA = 1 - pA;
  const qB = 1 - pB;
  const size = hitsToWin;
  const aFirst = new Float64Array(size * size);
  const bNext = new Float64Array(size * size);
  const at = (a: number, b: number): number => a * size + b;
  for (let a = hitsToWin - 1; a >= 0; a -= 1) {
    for (let b = hitsToWin - 1; b >= 0; b -= 1) {
      const afterAHits = a + 1 === hitsToWin ? 1 : (bNext[at(a + 1, b)] ?? Number.NaN);
      const afterBHits = b + 1 === hitsToWin ? 0 : (aFirst[at(a, b + 1)] ?? Number.NaN);
      const value = (pA * afterAHits + qA * pB * afterBHits) / (1 - qA * qB);
      aFirst[at(a, b)] = value;
      bNext[at(a, b)] = pB * afterBHits + qB * value;
    }
  }
  return aFirst[0] ?? Number.NaN;
}

/** Seeded Monte Carlo simulation of the race itself, shot by shot. */
function simulate(pA: number, pB: number, hitsToWin: number, volleys: VolleyOrder, duels: number, seed: number): DuelOutcome {
  const random = createRandomSource(seed);
  let aWins = 0;
  let bWins = 0;
  let ties = 0;
  for (let duel = 0; duel < duels; duel += 1) {
    let hitsA = 0;
    let hitsB = 0;
    for (;;) {
      if (random() < pA) hitsA += 1;
      if (volleys === 'alternating' && hitsA === hitsToWin) break;
      if (random() < pB) hitsB += 1;
      if (hitsA === hitsToWin || hitsB === hitsToWin) break;
    }
    if (hitsA === hitsToWin && hitsB === hitsToWin) ties += 1;
    else if (hitsA === hitsToWin) aWins += 1;
    else bWins += 1;
  }
  return { aWins: aWins / duels, bWins: bWins / duels, tie: ties / duels };
}

const cases: Array<[number, number, number]> = [
  [0.5, 0.5, 1],
  [0.3, 0.6, 3],
  [0.9, 0.1, 5],
  [0.05, 0.08, 30],
  [0.25, 0.2, 12],
  [1, 0.7, 4],
  [0.4, 1, 2],
];

describe('duelOutcome() against a dynamic program over (hits of A, hits of B)', () => {
  it.each(cases)('simultaneous pA = %s, pB = %s, k = %s agrees to 1e-13', (pA, pB, hitsToWin) => {
    const got = duelOutcome(pA, pB, hitsToWin, 'simultaneous');
    const want = dynamicProgramSimultaneous(pA, pB, hitsToWin);
    expect(Math.abs(got.aWins - want.aWins)).toBeLessThan(1e-13); // independent dynamic program above
    expect(Math.abs(got.bWins - want.bWins)).toBeLessThan(1e-13); // independent dynamic program above
    expect(Math.abs(got.tie - want.tie)).toBeLessThan(1e-13); // independent dynamic program above
  });

  it.each(cases)('alternating pA = %s, pB = %s, k = %s agrees to 1e-13', (pA, pB, hitsToWin) => {
    const got = duelOutcome(pA, pB, hitsToWin, 'alternating');
    const want = dynamicProgramAlternating(pA, pB, hitsToWin);
    expect(Math.abs(got.aWins - want)).toBeLessThan(1e-13); // independent dynamic program above
    expect(Math.abs(got.bWins - (1 - want))).toBeLessThan(1e-13); // independent dynamic program above
    expect(got.tie).toBe(0);
  });

  it('stays accurate over some 100 000 volleys (pA = 1e-4, pB = 2e-4, k = 3)', () => {
    const got = duelOutcome(1e-4, 2e-4, 3, 'simultaneous');
    const want = dynamicProgramSimultaneous(1e-4, 2e-4, 3);
    expect(Math.abs(got.aWins - want.aWins)).toBeLessThan(1e-12); // independent dynamic program above
    expect(Math.abs(got.tie - want.tie)).toBeLessThan(1e-12); // independent dynamic program above
  });

  it('neither overflows nor underflows for k = 1500, where p^k is 1e-452', () => {
    const got = duelOutcome(0.5, 0.48, 1500, 'alternating');
    const want = dynamicProgramAlternating(0.5, 0.48, 1500);
    expect(Number.isFinite(got.aWins)).toBe(true);
    expect(Math.abs(got.aWins - want)).toBeLessThan(1e-11); // independent dynamic program above
  });
});

describe('duelOutcome() against a seeded Monte Carlo simulation', () => {
  const duels = 40_000;
  it.each<[number, number, number, VolleyOrder]>([
    [0.35, 0.4, 3, 'simultaneous'],
    [0.6, 0.5, 2, 'simultaneous'],
    [0.2, 0.3, 4, 'alternating'],
  ])(`pA = %s, pB = %s, k = %s, %s: agrees within 4 standard errors over ${duels} simulated duels`, (pA, pB, hitsToWin, volleys) => {
    const exact = duelOutcome(pA, pB, hitsToWin, volleys);
    const simulated = simulate(pA, pB, hitsToWin, volleys, duels, 4242);
    for (const key of ['aWins', 'bWins', 'tie'] as const) {
      const standardError = Math.sqrt((exact[key] * (1 - exact[key])) / duels);
      expect(Math.abs(simulated[key] - exact[key])).toBeLessThanOrEqual(4 * standardError + 1e-12); // binomial standard error of a simulated proportion
    }
  });
});

describe('duelOutcome() closed forms and symmetries', () => {
  it.each([
    [0.5, 0.5],
    [0.2, 0.9],
    [0.73, 0.11],
  ])('k = 1, alternating: P(A wins) = pA / (1 - (1 - pA)(1 - pB)) for pA = %s, pB = %s', (pA, pB) => {
    const closedForm = pA / (1 - (1 - pA) * (1 - pB)); // geometric series over rounds of two misses
    expect(duelOutcome(pA, pB, 1, 'alternating').aWins).toBeCloseTo(closedForm, 14);
  });

  it.each([
    [0.5, 0.5],
    [0.2, 0.9],
  ])('k = 1, simultaneous: A alone pA(1 - pB), both pA pB, over 1 - (1 - pA)(1 - pB) for pA = %s, pB = %s', (pA, pB) => {
    const decided = 1 - (1 - pA) * (1 - pB);
    const outcome = duelOutcome(pA, pB, 1, 'simultaneous');
    expect(outcome.aWins).toBeCloseTo((pA * (1 - pB)) / decided, 14); // geometric series over rounds of two misses
    expect(outcome.tie).toBeCloseTo((pA * pB) / decided, 14); // geometric series over rounds of two misses
  });

  it('property (200 seeded runs): simultaneous aWins(pA, pB) = bWins(pB, pA) and tie is symmetric', () => {
    fc.assert(
      fc.property(fc.double({ min: 0.01, max: 1, noNaN: true }), fc.double({ min: 0.01, max: 1, noNaN: true }), fc.integer({ min: 1, max: 8 }), (pA, pB, hitsToWin) => {
        const forward = duelOutcome(pA, pB, hitsToWin, 'simultaneous');
        const backward = duelOutcome(pB, pA, hitsToWin, 'simultaneous');
        expect(forward.aWins).toBe(backward.bWins);
        expect(forward.tie).toBe(backward.tie);
      }),
      { seed: 7, numRuns: 200 },
    );
  });

  it.each([0.05, 0.3, 0.5, 0.99])('equal p = %s, simultaneous: A wins half after splitting ties', (probability) => {
    expect(duelWinProbability(probability, probability, 4, 'simultaneous')).toBeCloseTo(0.5, 14); // symmetry of the race
  });

  it('property (300 seeded runs): outcomes in [0, 1] summing to 1, and A\'s chance rises with pA', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.01, max: 1, noNaN: true }),
        fc.double({ min: 0.01, max: 1, noNaN: true }),
        fc.double({ min: 0.001, max: 0.5, noNaN: true }),
        fc.integer({ min: 1, max: 8 }),
        fc.constantFrom<VolleyOrder>('simultaneous', 'alternating'),
        (pA, pB, step, hitsToWin, volleys) => {
          const outcome = duelOutcome(pA, pB, hitsToWin, volleys);
          for (const value of [outcome.aWins, outcome.bWins, outcome.tie]) {
            expect(value).toBeGreaterThanOrEqual(0);
            expect(value).toBeLessThanOrEqual(1);
          }
          expect(Math.abs(outcome.aWins + outcome.bWins + outcome.tie - 1)).toBeLessThan(1e-13);
          const better = Math.min(1, pA + step);
          expect(duelWinProbability(better, pB, hitsToWin, volleys)).toBeGreaterThanOrEqual(
            duelWinProbability(pA, pB, hitsToWin, volleys) - 1e-13,
          );
        },
      ),
      { seed: 20240611, numRuns: 300 },
    );
  });
});

describe('duelOutcome() edge cases', () => {
  it('reports tie 1 when nobody can ever hit, for either order', () => {
    expect(duelOutcome(0, 0, 3, 'simultaneous')).toEqual({ aWins: 0, bWins: 0, tie: 1 });
    expect(duelOutcome(0, 0, 3, 'alternating')).toEqual({ aWins: 0, bWins: 0, tie: 1 });
  });

  it('gives the duel to the only player who can hit', () => {
    const outcome = duelOutcome(0, 0.2, 3, 'simultaneous');
    expect(outcome.aWins).toBe(0);
    expect(outcome.bWins).toBeCloseTo(1, 14); // P(N_B < ∞) = 1
    expect(duelOutcome(0.2, 0, 3, 'alternating').aWins).toBeCloseTo(1, 14); // P(N_A < ∞) = 1
  });

  it('resolves certain hits without NaN: both certain ties when simultaneous, A wins when A shoots first', () => {
    expect(duelOutcome(1, 1, 3, 'simultaneous')).toEqual({ aWins: 0, bWins: 0, tie: 1 });
    expect(duelOutcome(1, 1, 3, 'alternating')).toEqual({ aWins: 1, bWins: 0, tie: 0 });
    expect(duelOutcome(1, 0.5, 2, 'simultaneous').bWins).toBe(0);
  });

  it('throws a RangeError in the error grammar for bad arguments', () => {
    expect(() => duelOutcome(1.5, 0.5, 1, 'simultaneous')).toThrow(new RangeError('`hitProbabilityA` requires a number in [0, 1], got 1.5'));
    expect(() => duelOutcome(0.5, Number.NaN, 1, 'simultaneous')).toThrow(new RangeError('`hitProbabilityB` requires a number in [0, 1], got NaN'));
    expect(() => duelOutcome(0.5, 0.5, 0, 'simultaneous')).toThrow(new RangeError('`hitsToWin` requires a positive integer, got 0'));
    expect(() => duelOutcome(0.5, 0.5, 1, 'both' as VolleyOrder)).toThrow(new RangeError('`volleys` requires \'simultaneous\' or \'alternating\', got "both"'));
  });

  it('throws a RangeError when the duel is undecided after maximumVolleys', () => {
    expect(() => duelOutcome(1e-6, 1e-6, 2, 'simultaneous', { maximumVolleys: 1000 })).toThrow(RangeError);
  });
});
