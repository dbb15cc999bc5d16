/**
 * The spread of player skill in a pilot playtest: the standard deviation of
 * the players' offsets on the link scale (a random player intercept), from
 * the pilot's trials.
 *
 * Method: the model is fitted with one intercept per player in place of the
 * common one (the same binomial GLM, `fitBinomial`, on the pilot's rows and
 * terms), and the players' intercepts, with their variances from the fit, are
 * combined by the DerSimonian-Laird moment estimator of the between-unit
 * variance (`stats/between-variance.ts`), as a meta-analysis combines trials.
 * The estimator takes the intercepts as independent; they share the other
 * coefficients' estimates, which a pilot of a few rounds per condition per
 * player estimates far more precisely than any one player's intercept, so
 * the dependence is small. A player who hit every attempt (or none) has no
 * finite intercept: the estimate is refused, naming them.
 *
 * Cost: one fit with (players + terms) columns.
 */
import { type Result, error, fail, ok, show } from '../issues.js';
import type { Trials } from '../formats/trials-types.js';
import { groupTrials } from '../model/collapse.js';
import { buildDesign, difficultyCodingOf } from '../model/design.js';
import { fitBinomial } from '../model/fit-binomial.js';
import type { LinkName } from '../model/links.js';
import type { TermName } from '../model/terms.js';
import { betweenVariance } from '../stats/between-variance.js';

export interface PlayerSpreadEstimate {
  /** sqrt(tau^2): the players' standard deviation on the link scale. */
  readonly sd: number;
  readonly players: number;
  /** Cochran's Q of the players' intercepts. */
  readonly q: number;
}

/** Estimate the players' skill spread from a pilot's trials (with a `player` column), fitted with `terms` and `link`. */
export function playerSpreadFromTrials(trials: Trials, terms: readonly TermName[], link: LinkName): Result<PlayerSpreadEstimate> {
  const file = trials.file;
  if (trials.player === null) return fail([error('missing_column', `${file}:player`, 'estimating the players\' skill spread requires a `player` column, got none')]);
  const grouped = groupTrials(trials);
  const data = grouped.groups;
  const ids = grouped.players ?? [];
  if (ids.length < 3) return fail([error('too_few_players', `${file}:player`, `estimating the players' skill spread requires at least 3 players, got ${ids.length}`)]);
  const coding = difficultyCodingOf(trials);
  const shared = buildDesign(data, terms.filter((term) => term !== 'intercept'), coding).matrix;
  const n = data.rows;
  const columns = ids.length + shared.columns;
  const values = new Float64Array(n * columns);
  for (let i = 0; i < n; i += 1) values[(data.player?.[i] as number) * n + i] = 1;
  values.set(shared.values, ids.length * n);
  const names = [...ids.map((id) => `player[${id}]`), ...shared.names];
  const fit = fitBinomial(
    { design: { rows: n, columns, names, values }, successes: data.successes, trials: data.attempts, priorWeights: data.weight },
    { link, likelihood: trials.shape === 'per_attempt' ? 'bernoulli' : 'grouped' },
  );
  if (fit.status === 'separation') {
    const players = fit.divergingCoefficients.filter((name) => name.startsWith('player['));
    return fail([
      error(
        'separation',
        `${file}:player`,
        `estimating the players' skill spread requires every player to hit some attempts and miss some, got ${players.length > 0 ? players.map((name) => show(name.slice(7, -1))).join(', ') : 'a pilot whose fit separates'} with hits at probability 0 or 1; give \`--player-sd\` instead`,
      ),
    ]);
  }
  if (fit.status === 'rank_deficient') {
    return fail([error('rank_deficient', file, `estimating the players' skill spread requires every term identifiable with one intercept per player, got ${fit.aliased.map((name) => `\`${name}\``).join(', ')} aliased`)]);
  }
  const intercepts = fit.coefficients.subarray(0, ids.length);
  const variances = Float64Array.from(ids, (_, j) => fit.covariance[j * columns + j] as number);
  const between = betweenVariance(intercepts, variances);
  return ok({ sd: Math.sqrt(between.variance), players: ids.length, q: between.q });
}
