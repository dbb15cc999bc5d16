/**
 * The one SQL statement that turns trials rows (lagparity/trials@1 columns)
 * into grouped counts: per player, latency (rounded to a resolution), scale,
 * difficulty (and prior weight, when rows carry one) the hits and attempts.
 *
 * The statement is what `lagparity grouping-sql` prints for a user's own
 * engine and what `lagparity fit` runs in embedded DuckDB on Parquet files
 * and globs, so both give the same counts. It keeps to SQL that DuckDB,
 * PostgreSQL and ClickHouse (back to 18.16) read alike: a derived table,
 * GROUP BY on its columns, SUM and COUNT(*), FLOOR, + - * /, ORDER BY; no
 * window functions, no CAST, no ROUND (whose halves differ between engines:
 * PostgreSQL rounds a double half to even, DuckDB and ClickHouse away from
 * zero), and no alias that repeats a source column's name inside the query
 * that defines it (ClickHouse resolves aliases before columns).
 *
 * Rounding: a latency L becomes FLOOR(L * n + 0.5) / n for a resolution of
 * 1/n ms (n a whole number, e.g. 100 for 0.01 ms), else FLOOR(L / r + 0.5) * r:
 * half-way values go up, the same IEEE 754 double operations on every engine.
 * With n whole, a latency already on the grid (12.34 at 0.01 ms) comes back
 * as the same double (1234 / 100 is correctly rounded to the double nearest
 * 12.34, which is what 12.34 parses to), so counts on the grid fit exactly as
 * the rows do.
 *
 * Per-round rows (`hits`/`attempts`) are not merged: a round's grouped
 * likelihood (its deviance, and n in the CR1 factor) is defined on the rounds
 * as recorded (see `model/collapse.ts`), so the statement keeps each round,
 * with its latency rounded like the attempts'.
 */

/** The default latency resolution of the grouping, in ms (docs/method.md, section 1, gives its measured effect). */
export const DEFAULT_LATENCY_STEP_MS = 1;

/** What the source rows hold. */
export interface GroupingSqlOptions {
  /** The table (or quoted name) the rows are in; default `telemetry`. */
  readonly table?: string;
  /** Latency resolution in ms, above 0; default {@link DEFAULT_LATENCY_STEP_MS}. */
  readonly latencyStepMs?: number;
  /** `per_attempt` (a `hit` column, grouped) or `per_round` (`hits`/`attempts`, each round kept); default per_attempt. */
  readonly shape?: 'per_attempt' | 'per_round';
  /** Rows have a `player` column (a grouping key: the counts keep the player clusters); default true. */
  readonly player?: boolean;
  /** Rows have a `weight` column (a grouping key); default false. */
  readonly weight?: boolean;
  /** End with ORDER BY the keys (same input, same output order on every engine); default true. */
  readonly ordered?: boolean;
}

/** A number as an SQL literal in plain decimal notation (`0.01`, not `1e-2`). */
function literal(value: number): string {
  if (Number.isInteger(value)) return String(value);
  const text = String(value);
  const exponential = /^(\d)(?:\.(\d+))?e-(\d+)$/.exec(text);
  if (exponential === null) return text;
  // Shortest digits of a small value, written out: 3e-7 -> 0.0000003 (steps are above 0 and at most 60,000).
  const [, lead, rest, exponent] = exponential;
  return `0.${'0'.repeat(Number(exponent) - 1)}${lead ?? ''}${rest ?? ''}`;
}

/** Whole n with 1/n equal to the step (0.01 -> 100), or null when the step is not such a fraction. */
export function stepsPerMillisecond(step: number): number | null {
  const perMs = Math.round(1 / step);
  return perMs >= 1 && 1 / perMs === step ? perMs : null;
}

/** The SQL expressions of a latency's bin (a whole number) and of the bin's latency, for a column expression. */
export function latencyBinSql(column: string, step: number): { bin: string; latency: (bin: string) => string } {
  const perMs = stepsPerMillisecond(step);
  if (perMs === 1) return { bin: `FLOOR(${column} + 0.5)`, latency: (bin) => bin };
  if (perMs !== null) return { bin: `FLOOR(${column} * ${perMs} + 0.5)`, latency: (bin) => `${bin} / ${perMs}` };
  return { bin: `FLOOR(${column} / ${literal(step)} + 0.5)`, latency: (bin) => `${bin} * ${literal(step)}` };
}

/** The latency a value falls on at a step, computed as the SQL does (for tests and the in-process reader). */
export function roundLatency(value: number, step: number): number {
  const perMs = stepsPerMillisecond(step);
  if (perMs !== null) return Math.floor(value * perMs + 0.5) / perMs;
  return Math.floor(value / step + 0.5) * step;
}

/**
 * The grouping statement. Its result has the trials format's columns:
 * `player`, `latency_ms`, `scale`, `difficulty`[, `weight`], `hits`, `attempts`.
 *
 * @example
 * groupingSql({ latencyStepMs: 0.1 }) // SELECT player, latency_bin / 10 AS latency_ms, ... FROM (SELECT ...) AS binned GROUP BY ...
 */
export function groupingSql(options: GroupingSqlOptions = {}): string {
  const table = options.table ?? 'telemetry';
  const step = options.latencyStepMs ?? DEFAULT_LATENCY_STEP_MS;
  if (!(step > 0) || !Number.isFinite(step)) throw new RangeError(`latencyStepMs requires a finite number above 0, got ${String(step)}`);
  const shape = options.shape ?? 'per_attempt';
  const player = options.player ?? true;
  const weight = options.weight ?? false;
  const ordered = options.ordered ?? true;
  const { bin, latency } = latencyBinSql('t.latency_ms', step);
  const keys = [...(player ? ['player'] : []), 'latency_bin', 'scale', 'difficulty', ...(weight ? ['weight'] : [])];
  const inner = [...(player ? ['t.player AS player'] : []), `${bin} AS latency_bin`, 't.scale AS scale', 't.difficulty AS difficulty', ...(weight ? ['t.weight AS weight'] : [])];
  const counts = shape === 'per_attempt' ? ['t.hit AS hit'] : ['t.hits AS round_hits', 't.attempts AS round_attempts'];
  const outer = [...(player ? ['player'] : []), `${latency('latency_bin')} AS latency_ms`, 'scale', 'difficulty', ...(weight ? ['weight'] : [])];
  const lines = [
    `SELECT ${outer.join(', ')},`,
    shape === 'per_attempt' ? '  SUM(hit) AS hits, COUNT(*) AS attempts' : '  round_hits AS hits, round_attempts AS attempts',
    `FROM (SELECT ${[...inner, ...counts].join(', ')} FROM ${table} AS t) AS binned`,
  ];
  if (shape === 'per_attempt') lines.push(`GROUP BY ${keys.join(', ')}`);
  if (ordered) lines.push(`ORDER BY ${keys.join(', ')}${shape === 'per_round' ? ', round_hits, round_attempts' : ''}`);
  return `${lines.join('\n')};\n`;
}
