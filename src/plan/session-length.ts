/**
 * How long one participant's session lasts: every round (practice included)
 * plus a pause between two rounds. The plan warns when this exceeds its
 * `session_limit_minutes` (a fact of the trade with no single source: long
 * sessions tire players, and tired players aim worse, so a playtest keeps
 * sessions short; 45 minutes is the documented default).
 */

export interface SessionShape {
  readonly practice_rounds: number;
  readonly round_seconds: number;
  readonly pause_seconds: number;
}

/** Rounds one participant plays: practice, then `repetitions` of each of `conditions`. */
export function roundsPerParticipant(plan: SessionShape, conditions: number, repetitions: number): number {
  return plan.practice_rounds + conditions * repetitions;
}

/**
 * Minutes of a session of `rounds` rounds: rounds x round length plus
 * (rounds - 1) pauses.
 *
 * @example
 *   sessionMinutes({ practice_rounds: 2, round_seconds: 40, pause_seconds: 20 }, 26); // 25.67
 */
export function sessionMinutes(plan: SessionShape, rounds: number): number {
  if (rounds <= 0) return 0;
  return (rounds * plan.round_seconds + (rounds - 1) * plan.pause_seconds) / 60;
}
