/**
 * Who wins a race to `hitsToWin` hits between two players who shoot
 * independent Bernoulli volleys, player A hitting with probability pA per
 * volley and player B with pB. This turns per-shot hit probabilities (what the
 * latency model predicts) into duel outcomes (what players feel).
 *
 * Method. The number of volleys N a player needs for k hits is negative
 * binomial (Feller, W. (1968), An Introduction to Probability Theory and Its
 * Applications, vol. I, 3rd ed., Wiley, §VI.8):
 *
 *   P(N = n) = C(n − 1, k − 1) p^k (1 − p)^(n − k),  n = k, k + 1, …
 *
 * With N_A and N_B independent,
 *
 *   simultaneous volleys (both shoot each round):
 *     P(A wins) = Σ_n P(N_A = n) P(N_B > n),   P(tie) = Σ_n P(N_A = n) P(N_B = n);
 *   alternating volleys (A, then B, then A, …):
 *     P(A wins) = Σ_n P(N_A = n) P(N_B ≥ n),   P(B wins) = Σ_n P(N_B = n) P(N_A > n).
 *
 * The sums run over n = k, k + 1, … and stop at the first n where the mass
 * still undecided, P(N_A > n) · P(N_B > n), is below 1e-15, so the three
 * results sum to 1 within 1e-15 plus rounding.
 *
 * Numerics. P(N = n) is evaluated as C(n − 1, k − 1) · exp(k ln p + (n − k) ln(1 − p)),
 * with ln(1 − p) from `log1p`, so the power is never accumulated by repeated
 * multiplication; the binomial coefficient follows its recurrence
 * C(n, k − 1) = C(n − 1, k − 1) · n / (n − k + 1), held as a mantissa and a
 * binary exponent rescaled by exact powers of two, so it neither overflows nor
 * underflows for large n or k. The survival P(N > n) is 1 minus a compensated
 * running sum (Neumaier, A. (1974), ZAMM 54, 39–51) of the probabilities, so
 * its absolute error stays near 1e-16. Relative error of each term is about
 * (k |ln p| + 100) · 1e-16.
 */
import { show } from '../issues.js';

/** How the two players' volleys are ordered. */
export type VolleyOrder = 'simultaneous' | 'alternating';

/** Probabilities of the three ways a duel can end; they sum to 1 (within 1e-15). */
export interface DuelOutcome {
  readonly aWins: number;
  readonly bWins: number;
  /** Both reach `hitsToWin` in the same round (simultaneous only), or nobody can ever hit. */
  readonly tie: number;
}

export interface DuelOptions {
  /** Give up (RangeError) if the duel is still undecided after this many volleys each. Default 10 000 000. */
  readonly maximumVolleys?: number;
}

const undecidedTolerance = 1e-15;
const defaultMaximumVolleys = 10_000_000;
// Cody–Waite split of ln 2 (the constants of fdlibm's e_exp.c): `ln2High` has
// enough trailing zero bits that binaryExponent × ln2High is exact.
const ln2High = 6.93147180369123816490e-1;
const ln2Low = 1.90821492927058770002e-10;
const rescaleAbove = 2 ** 64;
const rescaleBelow = 2 ** -64;

/**
 * The distribution of the number of volleys one player needs, walked forward
 * one volley at a time from n = hitsToWin.
 */
class VolleysNeeded {
  /** Current n. */
  volley: number;
  /** P(N = n). */
  probability = 0;
  /** P(N > n). */
  survival = 1;

  private readonly hitsToWin: number;
  private readonly hitProbability: number;
  private readonly logHitTerm: number; // k ln p
  private readonly logMissProbability: number; // ln(1 − p)
  private coefficientMantissa = 1; // C(n − 1, k − 1) = mantissa · 2^binaryExponent
  private binaryExponent = 0;
  private cumulative = 0;
  private cumulativeCompensation = 0;

  constructor(hitProbability: number, hitsToWin: number) {
    this.hitsToWin = hitsToWin;
    this.hitProbability = hitProbability;
    this.logHitTerm = hitsToWin * Math.log(hitProbability);
    this.logMissProbability = Math.log1p(-hitProbability);
    this.volley = hitsToWin;
    this.update();
  }

  advance(): void {
    this.volley += 1;
    const ratio = (this.volley - 1) / (this.volley - this.hitsToWin);
    this.coefficientMantissa *= ratio;
    if (this.coefficientMantissa > rescaleAbove || this.coefficientMantissa < rescaleBelow) {
      const shift = Math.round(Math.log2(this.coefficientMantissa));
      this.coefficientMantissa *= 2 ** -shift;
      this.binaryExponent += shift;
    }
    this.update();
  }

  private update(): void {
    if (this.hitProbability === 0) {
      this.probability = 0;
    } else if (this.hitProbability === 1) {
      this.probability = this.volley === this.hitsToWin ? 1 : 0;
    } else {
      const exponent =
        this.logHitTerm +
        (this.volley - this.hitsToWin) * this.logMissProbability +
        this.binaryExponent * ln2High +
        this.binaryExponent * ln2Low;
      this.probability = this.coefficientMantissa * Math.exp(exponent);
    }
    // Neumaier's compensated summation of the probabilities so far.
    const next = this.cumulative + this.probability;
    this.cumulativeCompensation +=
      this.cumulative >= this.probability
        ? this.cumulative - next + this.probability
        : this.probability - next + this.cumulative;
    this.cumulative = next;
    this.survival = Math.max(0, 1 - this.cumulative - this.cumulativeCompensation);
  }
}

function checkProbability(name: string, value: number): void {
  if (!(value >= 0 && value <= 1)) {
    throw new RangeError(`\`${name}\` requires a number in [0, 1], got ${show(value)}`);
  }
}

/**
 * The probabilities that A wins, B wins, or the duel ties, when the first to
 * `hitsToWin` hits wins.
 *
 * - `'simultaneous'`: both shoot once per round; both reaching `hitsToWin` in
 *   the same round is a tie.
 * - `'alternating'`: A shoots first, then B, and so on; no ties.
 *
 * If both hit probabilities are 0 nobody ever wins; this is reported as
 * `tie: 1` (for either order). If exactly one is 0, the other player wins
 * with probability 1.
 *
 * Cost: O(N) where N is the number of volleys by which the duel is decided
 * except for 1e-15 of its mass, about (k + 8√k + 35) / max(pA, pB).
 *
 * @param hitProbabilityA pA in [0, 1].
 * @param hitProbabilityB pB in [0, 1].
 * @param hitsToWin k, a positive integer.
 * @throws RangeError on a probability outside [0, 1], a bad `hitsToWin` or
 *   `volleys`, or if the duel is undecided after `options.maximumVolleys`.
 * @example
 *   duelOutcome(0.5, 0.5, 1, 'alternating'); // { aWins: 2/3, bWins: 1/3, tie: 0 }
 */
export function duelOutcome(
  hitProbabilityA: number,
  hitProbabilityB: number,
  hitsToWin: number,
  volleys: VolleyOrder,
  options: DuelOptions = {},
): DuelOutcome {
  checkProbability('hitProbabilityA', hitProbabilityA);
  checkProbability('hitProbabilityB', hitProbabilityB);
  if (!(Number.isSafeInteger(hitsToWin) && hitsToWin >= 1)) {
    throw new RangeError(`\`hitsToWin\` requires a positive integer, got ${show(hitsToWin)}`);
  }
  if (volleys !== 'simultaneous' && volleys !== 'alternating') {
    throw new RangeError(`\`volleys\` requires 'simultaneous' or 'alternating', got ${show(volleys)}`);
  }
  const maximumVolleys = options.maximumVolleys ?? defaultMaximumVolleys;
  if (hitProbabilityA === 0 && hitProbabilityB === 0) return { aWins: 0, bWins: 0, tie: 1 };

  const playerA = new VolleysNeeded(hitProbabilityA, hitsToWin);
  const playerB = new VolleysNeeded(hitProbabilityB, hitsToWin);
  let aWins = 0;
  let bWins = 0;
  let tie = 0;
  // P(N_B > n − 1) before B's n-th volley; 1 before B's k-th.
  let bSurvivalBefore = 1;
  for (;;) {
    if (volleys === 'simultaneous') {
      aWins += playerA.probability * playerB.survival;
      bWins += playerB.probability * playerA.survival;
      tie += playerA.probability * playerB.probability;
    } else {
      aWins += playerA.probability * bSurvivalBefore;
      bWins += playerB.probability * playerA.survival;
    }
    if (playerA.survival * playerB.survival < undecidedTolerance) break;
    if (playerA.volley - hitsToWin + 1 >= maximumVolleys) {
      throw new RangeError(
        `\`hitProbabilityA\`, \`hitProbabilityB\` require a duel decided within ${maximumVolleys} volleys, ` +
          `got ${show(hitProbabilityA)}, ${show(hitProbabilityB)} with \`hitsToWin\` ${hitsToWin}`,
      );
    }
    bSurvivalBefore = playerB.survival;
    playerA.advance();
    playerB.advance();
  }
  return { aWins, bWins, tie };
}

/**
 * A's chance of winning the duel counting a tie as half a win: aWins + tie / 2.
 * This is the number to equalise when choosing compensation scales.
 *
 * Cost and errors as `duelOutcome`.
 *
 * @example
 *   duelWinProbability(0.3, 0.3, 3, 'simultaneous'); // 0.5
 */
export function duelWinProbability(
  hitProbabilityA: number,
  hitProbabilityB: number,
  hitsToWin: number,
  volleys: VolleyOrder,
  options: DuelOptions = {},
): number {
  const outcome = duelOutcome(hitProbabilityA, hitProbabilityB, hitsToWin, volleys, options);
  return outcome.aWins + outcome.tie / 2;
}
