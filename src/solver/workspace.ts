/**
 * Reusable typed arrays for the solver, so that a lobby solve allocates no
 * typed array of its own (an off-heap typed array costs about half a
 * microsecond to create, as much as solving several players).
 *
 * A workspace is grown to the largest lobby it has seen and reused. Arrays
 * are longer than the lobby: code reads them with explicit counts. The
 * solver's results point into the workspace, so a workspace may be reused
 * only once its previous results have been read: `balanceLobby` shares one
 * for its hot path (it copies everything into the result before returning)
 * and gives each report view a fresh one.
 */
export class SolveWorkspace {
  players = 0;
  samples = 0;
  estimates = new Float64Array(0);
  slots = new Int32Array(0);
  eligible = new Int32Array(0);
  offsets = new Int32Array(1);
  alphas = new Float64Array(0);
  betas = new Float64Array(0);
  before = new Float64Array(0);
  /** Each player's own limits (player-ceilings.ts). */
  need = new Float64Array(0);
  upper = new Float64Array(0);
  top = new Float64Array(0);
  ceiling = new Float64Array(0);
  flat = new Uint8Array(0);
  /** Box bounds and state of the grid greedy (step-greedy.ts), and its scratch. */
  start = new Float64Array(0);
  high = new Float64Array(0);
  index = new Float64Array(0);
  bestIndex = new Float64Array(0);
  /** The last two lifts' answers (lift-search.ts). */
  cachedIndex = new Float64Array(0);
  olderIndex = new Float64Array(0);
  frozen = new Uint8Array(0);
  heap = new Int32Array(0);
  lastKey = new Float64Array(0);
  nextKey = new Float64Array(0);
  rank = new Int32Array(0);
  /** Water-filling bounds and scales (water-level.ts). */
  low = new Float64Array(0);
  lowTerm = new Float64Array(0);
  highScale = new Float64Array(0);
  highTerm = new Float64Array(0);
  changes = new Float64Array(0);
  /** Sorted objective vectors, for comparing candidate answers. */
  objective = new Float64Array(0);
  bestObjective = new Float64Array(0);
  scales = new Float64Array(0);
  after = new Float64Array(0);
  binding = new Uint8Array(0);
  /** Scratch for the report (team figures, ordering); free once a solve is done. */
  scratch = new Float64Array(0);

  /** Make room for `players` players and `samples` samples in all. */
  reserve(players: number, samples: number): this {
    if (players > this.players) {
      const size = Math.max(players, 2 * this.players);
      this.players = size;
      this.estimates = new Float64Array(size);
      this.slots = new Int32Array(size);
      this.eligible = new Int32Array(size);
      this.offsets = new Int32Array(size + 1);
      this.before = new Float64Array(size);
      this.need = new Float64Array(size);
      this.upper = new Float64Array(size);
      this.top = new Float64Array(size);
      this.ceiling = new Float64Array(size);
      this.flat = new Uint8Array(size);
      this.start = new Float64Array(size);
      this.high = new Float64Array(size);
      this.index = new Float64Array(size);
      this.bestIndex = new Float64Array(size);
      this.cachedIndex = new Float64Array(size);
      this.olderIndex = new Float64Array(size);
      this.frozen = new Uint8Array(size);
      this.heap = new Int32Array(size);
      this.lastKey = new Float64Array(size);
      this.nextKey = new Float64Array(size);
      this.rank = new Int32Array(size);
      this.low = new Float64Array(size);
      this.lowTerm = new Float64Array(size);
      this.highScale = new Float64Array(size);
      this.highTerm = new Float64Array(size);
      this.changes = new Float64Array(size);
      this.objective = new Float64Array(size);
      this.bestObjective = new Float64Array(size);
      this.scales = new Float64Array(size);
      this.after = new Float64Array(size);
      this.binding = new Uint8Array(size);
      this.scratch = new Float64Array(size);
    }
    if (samples > this.samples) {
      const size = Math.max(samples, 2 * this.samples);
      this.samples = size;
      this.alphas = new Float64Array(size);
      this.betas = new Float64Array(size);
    }
    return this;
  }
}

/** What `orderFreeSum` adds up: the values, their squares, or their excess over 1, max(0, value - 1). */
export const PLAIN = 0;
export const SQUARES = 1;
export const EXCESS_OVER_ONE = 2;

/**
 * A sum of the first `count` values (or their squares, or their excess over
 * 1) that, in all but about one case in 2^27, does not depend on the order of
 * the terms, so that permuting a lobby's players leaves the reported figures
 * unchanged. Each term is split into a multiple of 2^(e-26), for 2^e above
 * the largest term, and a remainder below 2^(e-27) (Rump, Ogita and Oishi
 * (2008), "Accurate floating-point summation part I", SIAM J. Sci. Comput.
 * 31(1), 189-224, algorithm ExtractScalar: (x + sigma) - sigma with sigma =
 * 1.5 x 2^(e+26)). Up to 2^26 of the first parts add up exactly in any order;
 * the remainders' sum depends on the order only some 2^-80 relative to the
 * largest term, which changes the final rounding only near a tie. Cost:
 * O(count), no allocation.
 */
export function orderFreeSum(values: ArrayLike<number>, count: number, mode: number): number {
  let largest = 0;
  for (let index = 0; index < count; index += 1) {
    const value = values[index] as number;
    const term = mode === PLAIN ? value : mode === SQUARES ? value * value : value - 1;
    if (term > largest) largest = term;
  }
  if (!(largest > 0 && largest < Infinity)) {
    let sum = 0;
    for (let index = 0; index < count; index += 1) {
      const value = values[index] as number;
      sum += mode === PLAIN ? value : mode === SQUARES ? value * value : value > 1 ? value - 1 : 0;
    }
    return sum;
  }
  const sigma = splitter(largest);
  let highSum = 0;
  let lowSum = 0;
  if (mode === PLAIN) {
    for (let index = 0; index < count; index += 1) {
      const term = values[index] as number;
      const high = term + sigma - sigma;
      highSum += high;
      lowSum += term - high;
    }
  } else if (mode === SQUARES) {
    for (let index = 0; index < count; index += 1) {
      const value = values[index] as number;
      const term = value * value;
      const high = term + sigma - sigma;
      highSum += high;
      lowSum += term - high;
    }
  } else {
    for (let index = 0; index < count; index += 1) {
      const value = values[index] as number;
      if (!(value > 1)) continue;
      const term = value - 1;
      const high = term + sigma - sigma;
      highSum += high;
      lowSum += term - high;
    }
  }
  return highSum + lowSum;
}

/** 1.5 x 2^(e + 26) for the smallest power of two 2^e above `largest` (> 0), by exact halving and doubling. */
function splitter(largest: number): number {
  let sigma = 1.5 * 2 ** 27;
  let size = largest;
  while (size >= 1) {
    size *= 0.5;
    sigma *= 2;
  }
  while (size < 0.5) {
    size *= 2;
    sigma *= 0.5;
  }
  return sigma;
}

/**
 * The splitter of `orderFreeSum` for terms in [0, 1]: with it, a sum of shares
 * or probabilities needs no pass to find its largest term.
 */
const UNIT_SPLITTER = splitter(1);

/**
 * Order-free sums (as `orderFreeSum`, Rump, Ogita and Oishi's ExtractScalar)
 * of values in [0, 1] selected by `pick` (an index into `values`, or skip
 * with -1), in one pass: the sum and the sum of squares. For Jain's index and
 * team means, whose terms are probabilities or shares of the largest.
 */
export function unitSums(values: Float64Array, count: number, scale: number, members: Int32Array | null, member: number, out: { sum: number; squares: number; count: number }): void {
  const sigma = UNIT_SPLITTER;
  let highSum = 0;
  let lowSum = 0;
  let highSquares = 0;
  let lowSquares = 0;
  let taken = 0;
  for (let index = 0; index < count; index += 1) {
    if (members !== null && members[index] !== member) continue;
    const term = (values[index] as number) / scale;
    const high = term + sigma - sigma;
    highSum += high;
    lowSum += term - high;
    const square = term * term;
    const highSquare = square + sigma - sigma;
    highSquares += highSquare;
    lowSquares += square - highSquare;
    taken += 1;
  }
  out.sum = highSum + lowSum;
  out.squares = highSquares + lowSquares;
  out.count = taken;
}
