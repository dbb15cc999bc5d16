/**
 * The solver against enumeration (issue 14): for lobbies of up to 4 players
 * and grids of up to 30 allowed scales, `reference-answer.ts` enumerates every
 * feasible vector of docs/method.md's definition and picks the answer; the
 * solver must give the same sorted objective vector (to 1e-12), the same
 * assistance (to 1e-9) and the same scales when the optimum is unique (or
 * when the only ties are between players with identical curves, which the
 * ids decide). Every link, log and raw scale terms, point and sampled
 * latencies, every estimator and target kind, and every mix of cap, soft
 * cap, ratio, budget, eligibility limit and floor.
 */
import fc from 'fast-check';
import { describe, it } from 'vitest';
import { caseArbitrary, checkAgainstEnumeration } from './enumeration-cases.js';

describe('solveScales() against enumeration of every feasible vector', () => {
  it('property (4,000 seeded lobbies of 1-4 players, grids of up to 30 scales): same objective, assistance and scales as the definition', () => {
    fc.assert(fc.property(caseArbitrary, (drawn) => void checkAgainstEnumeration(drawn)), { seed: 14_001, numRuns: 4000 });
  });
});
