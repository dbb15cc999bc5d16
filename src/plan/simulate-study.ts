/**
 * One simulated playtest: players with skill offsets on the link scale,
 * drawn from a normal distribution (a random player intercept), play the
 * rounds of the schedule, and each round's hits are binomial at the assumed
 * model's hit probability:
 *
 *     hits ~ Binomial(attempts, g^-1(linearPredictor(L, s, d) + u_i)),   u_i ~ N(0, sd^2).
 *
 * The result is a per-round trials table, as the playtest's CSV would be read
 * (`player`, `latency_ms`, `scale`, `difficulty`, `hits`, `attempts`); the
 * practice rounds carry no weight in a fit and are not simulated. Draws come
 * from the seeded source in a fixed order: the players' offsets, then the
 * rounds in schedule order (`binomial-draw.ts`: one uniform a round for the
 * usual round sizes).
 *
 * Cost: O(participants x rounds) uniforms and O(total hits) arithmetic.
 */
import type { Trials } from '../formats/trials-types.js';
import { linkFor } from '../model/links.js';
import { scaleTermValue } from '../model/terms.js';
import { type RandomSource, standardNormalDraw } from '../random.js';
import type { AssumedModel } from './assumed-model.js';
import { participantId } from './build-schedule.js';
import { binomialDraw } from './binomial-draw.js';
import type { Condition } from './conditions.js';

export interface StudyShape {
  readonly difficulty: readonly number[] | readonly string[];
  readonly conditions: readonly Condition[];
  /** Condition ids of each participant's rounds, in session order (practice left out). */
  readonly orders: readonly (readonly number[])[];
  readonly attempts: number;
}

/** Each condition's linear predictor under the assumed model (without a player's offset). */
export function conditionPredictors(shape: Pick<StudyShape, 'difficulty' | 'conditions'>, truth: AssumedModel): Float64Array {
  return Float64Array.from(shape.conditions, (condition) => {
    const line = truth.lines[(shape.difficulty as readonly (number | string)[]).indexOf(condition.difficulty)];
    if (line === undefined) throw new RangeError(`difficulty ${String(condition.difficulty)} has no predictor line`);
    const latency = condition.latency_ms;
    return line.base + line.basePerMs * latency + (line.scaleSlope + line.scaleSlopePerMs * latency) * scaleTermValue(truth.scaleForm, condition.scale);
  });
}

/** Draw one study's per-round trials. `predictors` from `conditionPredictors` (computed once per shape). */
export function simulateTrials(shape: StudyShape, truth: AssumedModel, predictors: Float64Array, playerSd: number, random: RandomSource): Trials {
  const link = linkFor(truth.link);
  const participants = shape.orders.length;
  const rows = shape.orders.reduce((sum, order) => sum + order.length, 0);
  const latency = new Float64Array(rows);
  const scale = new Float64Array(rows);
  const successes = new Float64Array(rows);
  const attempts = new Float64Array(rows).fill(shape.attempts);
  const playerCodes = new Int32Array(rows);
  const numeric = typeof shape.difficulty[0] === 'number';
  const difficultyValues = new Float64Array(numeric ? rows : 0);
  const difficultyCodes = new Int32Array(numeric ? 0 : rows);
  const offsets = Float64Array.from({ length: participants }, () => (playerSd > 0 ? playerSd * standardNormalDraw(random) : 0));
  const levelOf = shape.conditions.map((condition) => (shape.difficulty as readonly (number | string)[]).indexOf(condition.difficulty));
  let row = 0;
  shape.orders.forEach((order, player) => {
    const offset = offsets[player] as number;
    for (const id of order) {
      const condition = shape.conditions[id] as Condition;
      const probability = link.inverse((predictors[id] as number) + offset);
      const hits = binomialDraw(shape.attempts, probability, random);
      latency[row] = condition.latency_ms;
      scale[row] = condition.scale;
      successes[row] = hits;
      playerCodes[row] = player;
      if (numeric) difficultyValues[row] = condition.difficulty as number;
      else difficultyCodes[row] = levelOf[id] as number;
      row += 1;
    }
  });
  return {
    file: 'simulated',
    shape: 'per_round',
    rows,
    latency,
    scale,
    difficulty: numeric ? { kind: 'numeric', values: difficultyValues } : { kind: 'levels', levels: [...(shape.difficulty as readonly string[])], codes: difficultyCodes },
    successes,
    attempts,
    weight: null,
    player: { ids: Array.from({ length: participants }, (_, index) => participantId(index, participants)), codes: playerCodes },
  };
}
