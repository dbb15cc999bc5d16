import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { williamsDesign, williamsSequenceCount } from '../../src/plan/williams-design.js';
import { ROOT } from '../helpers/demo.js';
import { adjacentPairCounts, positionCounts } from './balance.js';

interface Squares {
  crossdes_williams_3: number[][];
  crossdes_williams_10_first_six: number[][];
  four_treatments_literature: string[];
  four_treatments_forum: string[];
  five_treatments_memory: string[];
}
const squares = JSON.parse(readFileSync(join(ROOT, 'test', 'fixtures', 'plan', 'williams-squares.json'), 'utf8')) as Squares;

const fromLetters = (rows: readonly string[]) => rows.map((row) => [...row].map((letter) => letter.charCodeAt(0) - 65));
const fromOneBased = (rows: readonly number[][]) => rows.map((row) => row.map((value) => value - 1));

/** Whether `published` is `ours` with the treatments renamed and the sequences in another order. */
function equalByRelabelling(ours: number[][], published: number[][]): boolean {
  if (ours.length !== published.length) return false;
  const key = (rows: number[][]) => rows.map((row) => row.join(',')).sort().join(';');
  const target = key(ours);
  const first = published[0] as number[];
  // A relabelling maps the published first sequence onto one of ours, position by position.
  return ours.some((candidate) => {
    const rename = new Map(first.map((treatment, position) => [treatment, candidate[position] as number]));
    return key(published.map((row) => row.map((treatment) => rename.get(treatment) as number))) === target;
  });
}

describe('williamsDesign()', () => {
  it('equals crossdes williams(3) and the first six sequences of williams(10) exactly', () => {
    // Outside reference: R package crossdes, the documented example output (test/fixtures/plan/README.md).
    expect(williamsDesign(3)).toEqual(fromOneBased(squares.crossdes_williams_3));
    expect(williamsDesign(10).slice(0, 6)).toEqual(fromOneBased(squares.crossdes_williams_10_first_six));
  });

  it('equals the published 4 x 4 Williams square (ABDC/BCAD/CDBA/DACB) exactly, and the other by relabelling', () => {
    // Williams (1949) cyclic square as quoted in the BEBAC forum (fixtures README); the second square there is a relabelling.
    expect(williamsDesign(4)).toEqual(fromLetters(squares.four_treatments_literature));
    expect(equalByRelabelling(williamsDesign(4), fromLetters(squares.four_treatments_forum))).toBe(true);
  });

  it('equals the ten-sequence Williams design for 5 treatments', () => {
    // From memory of Williams (1949) / Jones and Kenward's tabulation, verified by the balance property below.
    const reference = fromLetters(squares.five_treatments_memory);
    expect(adjacentPairCounts(reference, 5).every((count, index) => count === (index % 6 === 0 ? 0 : 2))).toBe(true);
    expect(williamsDesign(5)).toEqual(reference);
  });

  it('tells a relabelled square from a different one', () => {
    // The check above can fail: a cyclic Latin square of 4 (ABCD/BCDA/CDAB/DABC) is no relabelling of a Williams square.
    expect(equalByRelabelling(williamsDesign(4), fromLetters(['ABCD', 'BCDA', 'CDAB', 'DABC']))).toBe(false);
  });

  it('balances first-order carry-over for every t from 2 to 40 (each ordered pair adjacent once for even t, twice for odd t)', () => {
    for (let t = 2; t <= 40; t += 1) {
      const design = williamsDesign(t);
      expect(design.length).toBe(williamsSequenceCount(t));
      const expected = t % 2 === 0 ? 1 : 2;
      const wanted = Array.from({ length: t * t }, (_, index) => (Math.floor(index / t) === index % t ? 0 : expected));
      expect(adjacentPairCounts(design, t), `t=${t}`).toEqual(wanted);
      // Each sequence holds every treatment once; each position holds every treatment equally often.
      for (const sequence of design) expect([...sequence].sort((a, b) => a - b)).toEqual(Array.from({ length: t }, (_, i) => i));
      expect(new Set(positionCounts(design, t)).size).toBe(1);
    }
  });

  it('refuses a count that is not a whole number from 1 (property, 200 runs)', () => {
    fc.assert(
      fc.property(fc.oneof(fc.integer({ max: 0 }), fc.double({ noInteger: true, noNaN: true })), (bad) => {
        expect(() => williamsDesign(bad)).toThrow(RangeError);
      }),
      { seed: 23, numRuns: 200 },
    );
  });
});
