import { describe, expect, it } from 'vitest';
import { balanceLobby } from '../../../src/solver/balance-lobby.js';
import { semiDefiniteCholesky } from '../../../src/numeric/semidefinite-cholesky.js';

const choleskySemiDefinite = (matrix: number[], size: number) => semiDefiniteCholesky(matrix, size).lower;
import { compiled, lobbyOf, rulesOf, type ModelSpec } from '../arbitraries.js';

const spec: ModelSpec = { link: 'logit', form: 'log', intercept: 0.5, latency: -0.01, scale: 1.5, difficulty: 0, interaction: 0.002 };
const lobby = lobbyOf([10, 50, 90, 140], ['red', 'red', 'blue', 'blue']);
const rules = rulesOf({ scale_cap: 3 });

function uncertainty(variance: number, options: { draws?: number; seed?: number } | true = true) {
  const result = balanceLobby(lobby, compiled({ ...spec, variance }), rules, { views: { uncertainty: options } });
  if (result.status === 'rejected' || result.views?.uncertainty === undefined) throw new Error('no uncertainty view');
  return result.views.uncertainty;
}

describe('semiDefiniteCholesky()', () => {
  it('factors a singular covariance, giving a zero column where the pivot vanishes', () => {
    // Sigma = v v' for v = (1, 2, 0): by hand L = [[1, 0, 0], [2, 0, 0], [0, 0, 0]].
    expect(Array.from(choleskySemiDefinite([1, 2, 0, 2, 4, 0, 0, 0, 0], 3))).toEqual([1, 0, 0, 2, 0, 0, 0, 0, 0]);
  });
  it('reproduces a positive-definite covariance: L L\' = Sigma', () => {
    const sigma = [4, 2, 0.4, 2, 2, 0.5, 0.4, 0.5, 3];
    const lower = choleskySemiDefinite(sigma, 3);
    for (let row = 0; row < 3; row += 1) {
      for (let column = 0; column < 3; column += 1) {
        let sum = 0;
        for (let inner = 0; inner < 3; inner += 1) sum += (lower[row * 3 + inner] ?? 0) * (lower[column * 3 + inner] ?? 0);
        expect(sum).toBeCloseTo(sigma[row * 3 + column] ?? Number.NaN, 14); // definition of the Cholesky factor
      }
    }
  });
});

describe('uncertaintyView()', () => {
  it('gives a zero-width interval at the point scale for a zero covariance', () => {
    const view = uncertainty(0);
    expect([view.draws, view.rejected_draws, view.method]).toEqual([200, 0, 'coefficient_draws']);
    for (const player of view.players) expect([player.scale_low, player.scale_high]).toEqual([player.scale, player.scale]);
  });

  it('gives intervals that contain the point scale and widen with the coefficients\' variance', () => {
    const narrow = uncertainty(1e-7);
    const wide = uncertainty(4e-7);
    narrow.players.forEach((player, index) => {
      expect(player.scale_low).toBeLessThanOrEqual(player.scale);
      expect(player.scale_high).toBeGreaterThanOrEqual(player.scale);
      const other = wide.players[index];
      if (index > 0 && other !== undefined) expect((other.scale_high ?? 0) - (other.scale_low ?? 0)).toBeGreaterThan((player.scale_high ?? 0) - (player.scale_low ?? 0));
    });
    // The best-connected player sets the target at scale 1 in every draw.
    expect([narrow.players[0]?.scale_low, narrow.players[0]?.scale_high]).toEqual([1, 1]);
  });

  it('is deterministic with the seed and changes with it', () => {
    expect(uncertainty(1e-7, { draws: 50, seed: 9 })).toEqual(uncertainty(1e-7, { draws: 50, seed: 9 }));
    expect(uncertainty(1e-7, { draws: 50, seed: 9 }).players[3]?.scale_low).not.toBe(uncertainty(1e-7, { draws: 50, seed: 10 }).players[3]?.scale_low);
  });
});
