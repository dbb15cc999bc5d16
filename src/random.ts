/**
 * A seeded pseudo-random source, so that every simulation in the library is
 * reproducible: same seed, same sequence, on every platform.
 *
 * Generator: xoshiro128** 1.1 of Blackman, D. and Vigna, S. (2021), "Scrambled
 * linear pseudorandom number generators", ACM Transactions on Mathematical
 * Software 47(4), article 36, doi:10.1145/3460772; reference code
 * `xoshiro128starstar.c` at https://prng.di.unimi.it/. Its 128-bit state is
 * filled from the seed with SplitMix64 (Steele, G. L., Lea, D. and Flood, C. H.
 * (2014), "Fast splittable pseudorandom number generators", OOPSLA 2014,
 * doi:10.1145/2660193.2660195; reference code `splitmix64.c` at the same site),
 * as the xoshiro authors recommend.
 *
 * Randomness is a parameter everywhere in lagparity: library functions take a
 * `RandomSource`; only the command line binds one to a default seed.
 */
import { normalQuantile } from './stats/distributions.js';
import { show } from './issues.js';

/** A function returning independent uniform draws in [0, 1). */
export type RandomSource = () => number;

/** The four 32-bit words of a xoshiro128** state. */
export type Xoshiro128State = readonly [number, number, number, number];

const twoToMinus32 = 2 ** -32;
const mask64 = (1n << 64n) - 1n;

/**
 * SplitMix64: a stream of unsigned 64-bit words (as bigints) from a 64-bit seed.
 * Used here only to expand a seed into a xoshiro128** state; exported so the
 * published reference stream can be checked.
 *
 * Cost: a few bigint operations per word.
 *
 * @example
 *   const next = splitMix64(1477776061723855037n);
 *   next(); // 1985237415132408290n
 */
export function splitMix64(seed: bigint): () => bigint {
  let counter = BigInt.asUintN(64, seed);
  return () => {
    counter = (counter + 0x9e3779b97f4a7c15n) & mask64;
    let mixed = counter;
    mixed = ((mixed ^ (mixed >> 30n)) * 0xbf58476d1ce4e5b9n) & mask64;
    mixed = ((mixed ^ (mixed >> 27n)) * 0x94d049bb133111ebn) & mask64;
    return mixed ^ (mixed >> 31n);
  };
}

function rotateLeft(word: number, bits: number): number {
  return ((word << bits) | (word >>> (32 - bits))) >>> 0;
}

/**
 * xoshiro128** 1.1 from an explicit state: a stream of unsigned 32-bit
 * integers. The state must not be all zero. Exported for callers who need raw
 * 32-bit words and for the check against the reference implementation.
 *
 * Cost: a handful of 32-bit operations per word; period 2^128 - 1.
 *
 * @example
 *   const next = createXoshiro128StarStar([1, 2, 3, 4]);
 *   next(); // 11520
 */
export function createXoshiro128StarStar(state: Xoshiro128State): () => number {
  let [word0, word1, word2, word3] = state.map((word) => word >>> 0) as [number, number, number, number];
  if ((word0 | word1 | word2 | word3) === 0) {
    throw new RangeError('`state` requires at least one non-zero word, got [0, 0, 0, 0]');
  }
  return () => {
    const result = Math.imul(rotateLeft(Math.imul(word1, 5) >>> 0, 7), 9) >>> 0;
    const shifted = (word1 << 9) >>> 0;
    word2 = (word2 ^ word0) >>> 0;
    word3 = (word3 ^ word1) >>> 0;
    word1 = (word1 ^ word2) >>> 0;
    word0 = (word0 ^ word3) >>> 0;
    word2 = (word2 ^ shifted) >>> 0;
    word3 = rotateLeft(word3, 11);
    return result;
  };
}

/**
 * A seeded uniform source on [0, 1): xoshiro128** seeded by SplitMix64, each
 * 32-bit word divided by 2^32 (so draws are multiples of 2^-32, and 0 can occur
 * but 1 cannot).
 *
 * @param seed any safe integer (negative seeds are taken modulo 2^64).
 * @throws RangeError if `seed` is not a safe integer.
 * @example
 *   const random = createRandomSource(42);
 *   random(); // the same number on every run
 */
export function createRandomSource(seed: number): RandomSource {
  if (!Number.isSafeInteger(seed)) {
    throw new RangeError(`\`seed\` requires a safe integer, got ${show(seed)}`);
  }
  const seeder = splitMix64(BigInt(seed));
  const first = seeder();
  const second = seeder();
  // SplitMix64 is a bijection of its counter, so two consecutive outputs are
  // never both zero and the xoshiro state below is never all zero.
  const nextWord = createXoshiro128StarStar([
    Number(first & 0xffffffffn),
    Number(first >> 32n),
    Number(second & 0xffffffffn),
    Number(second >> 32n),
  ]);
  return () => nextWord() * twoToMinus32;
}

/**
 * One standard normal draw by inversion: Φ⁻¹(U) for U uniform on (0, 1)
 * (the inverse-CDF method; Devroye, L. (1986), Non-Uniform Random Variate
 * Generation, Springer, §II.2). A draw of exactly 0 is rejected and redrawn, so
 * the result is always finite. Consumes one uniform (rarely more).
 *
 * @example
 *   const z = standardNormalDraw(createRandomSource(7));
 */
export function standardNormalDraw(random: RandomSource): number {
  let uniform = random();
  while (uniform <= 0) uniform = random();
  return normalQuantile(uniform);
}

/**
 * The indices 0..count-1 in a uniformly random order: the Fisher-Yates
 * shuffle (Durstenfeld's in-place form; Knuth, TAOCP vol. 2, 3rd ed., §3.4.2,
 * Algorithm P), each swap drawn from `random`. Consumes count - 1 uniforms.
 *
 * @example
 *   shuffledIndices(5, createRandomSource(3)); // the same order on every run
 */
export function shuffledIndices(count: number, random: RandomSource): Int32Array {
  const order = Int32Array.from({ length: count }, (_, i) => i);
  for (let i = count - 1; i > 0; i -= 1) {
    const j = Math.floor(random() * (i + 1));
    const saved = order[i] as number;
    order[i] = order[j] as number;
    order[j] = saved;
  }
  return order;
}
