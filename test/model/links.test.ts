import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LINK_NAMES, linkFor } from '../../src/model/links.js';
import { readTable, relativeError } from '../helpers/glm-fixtures.js';

/** R 4.2.2 pnorm values from normal_r.csv (reference README §5). */
function rNormal(fn: 'pnorm' | 'pnorm_upper', argument: number): number {
  const row = readTable('normal_r.csv').rows.find((r) => r[0] === fn && Number(r[1]) === argument);
  if (row === undefined) throw new Error(`no ${fn}(${argument})`);
  return Number(row[2]);
}

describe('linkFor()', () => {
  it.each(LINK_NAMES)('returns the %s link under its own name', (name) => {
    expect(linkFor(name).name).toBe(name);
  });

  // Above x = 2 the round trip through mu is limited by mu's absolute precision near 1, not by the link.
  it('inverts each link: link(inverse(x)) = x on [-6, 2] (300 seeded runs)', () => {
    fc.assert(
      fc.property(fc.constantFrom(...LINK_NAMES), fc.double({ min: -6, max: 2, noNaN: true }), (name, x) => {
        const link = linkFor(name);
        expect(Math.abs(link.link(link.inverse(x)) - x)).toBeLessThan(1e-9 * Math.max(1, Math.abs(x))); // identity g(g^{-1}(x)) = x
      }),
      { seed: 42, numRuns: 300 },
    );
  });

  it('keeps inverse + inverseComplement = 1 (200 seeded runs)', () => {
    fc.assert(
      fc.property(fc.constantFrom(...LINK_NAMES), fc.double({ min: -30, max: 30, noNaN: true }), (name, x) => {
        const link = linkFor(name);
        expect(Math.abs(link.inverse(x) + link.inverseComplement(x) - 1)).toBeLessThan(4 * Number.EPSILON); // mu + (1 - mu) = 1
      }),
      { seed: 42, numRuns: 200 },
    );
  });

  it('keeps full relative accuracy in both logit tails', () => {
    const logit = linkFor('logit');
    expect(relativeError(logit.inverse(-700), Math.exp(-700))).toBeLessThan(1e-15); // definition e^x / (1 + e^x), 1 + e^-700 = 1 in double
    expect(relativeError(logit.inverseComplement(700), Math.exp(-700))).toBeLessThan(1e-15); // definition 1 - mu = 1 / (1 + e^x)
    expect(relativeError(logit.inverseComplement(40), Math.exp(-40) / (1 + Math.exp(-40)))).toBeLessThan(1e-15); // definition 1 / (1 + e^x)
  });

  it('matches R pnorm in the probit tails', () => {
    const probit = linkFor('probit');
    expect(relativeError(probit.inverse(-10), rNormal('pnorm', -10))).toBeLessThan(1e-14); // R 4.2.2 pnorm(-10), normal_r.csv
    expect(relativeError(probit.inverse(-37.5), rNormal('pnorm', -37.5))).toBeLessThan(1e-12); // R 4.2.2 pnorm(-37.5), normal_r.csv
    expect(relativeError(probit.inverseComplement(8), rNormal('pnorm_upper', 8))).toBeLessThan(1e-14); // R 4.2.2 pnorm(8, lower.tail = FALSE), normal_r.csv
  });

  it('keeps full relative accuracy in both cloglog tails', () => {
    const cloglog = linkFor('cloglog');
    // 1 - exp(-e^x) = e^x - e^{2x}/2 + ..., so at x = -40 it is e^-40 to rounding.
    expect(relativeError(cloglog.inverse(-40), Math.exp(-40))).toBeLessThan(1e-15); // series of 1 - exp(-e^x)
    expect(relativeError(cloglog.inverseComplement(3), Math.exp(-Math.exp(3)))).toBeLessThan(1e-15); // definition 1 - mu = exp(-e^x)
    expect(cloglog.inverseComplement(4)).toBeGreaterThan(0); // exp(-e^4) = 1.9e-24, not 1 - 1 = 0
  });

  it('gives derivatives that match central differences (200 seeded runs)', () => {
    fc.assert(
      fc.property(fc.constantFrom(...LINK_NAMES), fc.double({ min: -5, max: 3, noNaN: true }), (name, x) => {
        const link = linkFor(name);
        const h = 1e-5;
        const first = (link.inverse(x + h) - link.inverse(x - h)) / (2 * h);
        const second = (link.derivative(x + h) - link.derivative(x - h)) / (2 * h);
        expect(Math.abs(link.derivative(x) - first)).toBeLessThan(1e-8); // central difference of the inverse, O(h^2)
        expect(Math.abs(link.secondDerivative(x) - second)).toBeLessThan(1e-8); // central difference of the derivative, O(h^2)
      }),
      { seed: 42, numRuns: 200 },
    );
  });

  it('never returns NaN for extreme linear predictors', () => {
    for (const name of LINK_NAMES) {
      const link = linkFor(name);
      for (const x of [-1e308, -800, -40, 40, 800, 1e308]) {
        const values = [link.inverse(x), link.inverseComplement(x), link.derivative(x), link.secondDerivative(x)];
        expect(values.some(Number.isNaN)).toBe(false);
      }
    }
  });
});
