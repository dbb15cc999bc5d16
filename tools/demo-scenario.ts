/**
 * The demo scenario, invented for lagparity's examples: the Harbourline Arena
 * League (fictional) plays "Tidebreak", a fictional arena shooter, on the
 * league's Port Veyra server region (fictional). Every name, number and player
 * here is made up.
 *
 * The ground-truth model below generates the synthetic playtest. It is
 * documented in docs/demo.md; the fitting tests check that fitting the
 * generated playtest recovers it.
 */
export const GROUND_TRUTH = {
  link: 'logit' as const,
  terms: ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'] as const,
  difficultyLevels: ['standard', 'veteran', 'elite'] as const,
  reference: 'standard',
  coefficients: {
    intercept: 0.9,
    latency: -0.008,
    log_scale: 1.6,
    'difficulty[veteran]': -0.5,
    'difficulty[elite]': -1.0,
    latency_x_log_scale: 0.004,
  } as Record<string, number>,
  /** Standard deviation of a player's skill offset on the logit scale (a small random intercept). */
  playerSkillSd: 0.15,
};

/** The ground truth's linear predictor (logit) of an average player, without the skill offset. */
export function groundTruthPredictor(latency: number, scale: number, difficulty: string): number {
  const coefficients = GROUND_TRUTH.coefficients;
  const logScale = Math.log(scale);
  return (
    (coefficients.intercept ?? 0) +
    (coefficients.latency ?? 0) * latency +
    (coefficients.log_scale ?? 0) * logScale +
    (difficulty === 'standard' ? 0 : (coefficients[`difficulty[${difficulty}]`] ?? 0)) +
    (coefficients.latency_x_log_scale ?? 0) * latency * logScale
  );
}

export const TEAMS = ['Saltmarsh Herons', 'Copperline Foxes', 'Glasswater Owls', 'Ironreed Stags'] as const;

export const HANDLES = [
  'brinewick', 'tallowmere', 'quillfen', 'ashgrove', 'morrowlit', 'dunharrow', 'pebblewright', 'sorrelvane',
  'kestrelby', 'lanternjaw', 'mirefoot', 'oakhollow', 'rushwater', 'saltgrin', 'thistledown', 'vellumcrest',
  'wickerby', 'yarrowind', 'cinderfell', 'driftmoor', 'emberlyn', 'fernhask', 'gildenrow', 'hollowmere',
];
