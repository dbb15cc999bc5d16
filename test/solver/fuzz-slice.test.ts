import { describe, expect, it } from 'vitest';
import { createRandomSource } from '../../src/random.js';
import { checkInvariants, randomCase } from './invariants.js';

// The seeded slice of `npm run fuzz:solver` that CI runs: every documented invariant of the answer
// (docs/method.md, section 3) on 2,000 random lobbies of up to 128 players.
describe('balanceLobby() invariants on random lobbies (seeded slice of the solver fuzz)', () => {
  it('breaks no invariant in 2,000 lobbies (seed 2026)', () => {
    const random = createRandomSource(2026);
    const failures: string[] = [];
    for (let index = 0; index < 2000; index += 1) {
      const drawn = randomCase(random, 128);
      const outcome = checkInvariants(drawn, index % 10 === 0 ? drawn.lobby.players.map(() => random()) : null);
      for (const failure of outcome.broken) failures.push(`${failure.invariant}: ${failure.note} in ${JSON.stringify(drawn)}`);
    }
    expect(failures.slice(0, 3)).toEqual([]);
  });
});
