/**
 * Grouping one covariate of a trials file into the levels a summary reports.
 *
 * A covariate with few distinct values (at most {@link MAX_LEVELS}) is kept as
 * it is, one group per value. A continuous one (latency measured per round is
 * the usual case) is cut into bins. Every numeric bin is closed on the left
 * and open on the right, `[lower, upper)`, except the last, which also holds
 * its upper end. The ways to cut:
 *
 * - `quantile:K` (the default for a continuous covariate, K = 6): cut points
 *   at the Hyndman & Fan (1996) type 7 sample quantiles k/K, k = 1..K-1, of
 *   the rows' values, so the bins hold about equal numbers of rows; repeated
 *   cut points are merged, so ties can leave fewer than K bins. The first bin
 *   starts at the smallest value, the last ends at the largest.
 * - `width:W`: fixed-width bins `[k W, (k + 1) W)`, k = 0, 1, ...; only
 *   occupied bins are listed.
 * - `edges:a,b,c`: the given cut points (strictly increasing); the first bin
 *   starts at the smallest value, the last ends at the largest.
 * - `levels`: one group per distinct value, however many.
 */
import { type Result, error, fail, ok, show } from '../issues.js';
import { quantileSorted } from '../stats/quantile.js';

/** Above this many distinct values, `auto` bins a numeric covariate. */
export const MAX_LEVELS = 12;
/** The number of quantile bins `auto` uses for a continuous covariate. */
export const DEFAULT_QUANTILE_BINS = 6;
/** A grouping may have at most this many groups. */
export const MAX_GROUPS = 1000;

export type BinSpec =
  | { readonly kind: 'auto' }
  | { readonly kind: 'levels' }
  | { readonly kind: 'quantile'; readonly bins: number }
  | { readonly kind: 'width'; readonly width: number }
  | { readonly kind: 'edges'; readonly edges: readonly number[] };

export interface Group {
  /** As shown to people: `1.25`, `veteran`, `[47.2, 88.6) ms`. */
  readonly label: string;
  /** The value of a level (number or name); null for a bin. */
  readonly value: number | string | null;
  /** A bin's lower end (always included); null for a level. */
  readonly lower: number | null;
  /** A bin's upper end; null for a level. */
  readonly upper: number | null;
  /** Whether the bin holds values equal to `upper` (only the last numeric bin of `quantile` and `edges` does). */
  readonly includes_upper: boolean;
  /** Rows of the trials file in this group. */
  readonly rows: number;
}

export interface Grouping {
  readonly method: 'levels' | 'quantile' | 'width' | 'edges';
  /** One sentence that states the bins, for the output. */
  readonly description: string;
  readonly groups: readonly Group[];
  /** The group index of each row. */
  readonly codes: Int32Array;
}

/**
 * Parse a bin spec: `auto`, `levels`, `quantile:K`, `width:W` or
 * `edges:a,b,...`. `where` names the option in issues.
 *
 * @example
 *   parseBinSpec('width:40'); // { ok: true, value: { kind: 'width', width: 40 }, ... }
 */
export function parseBinSpec(text: string, where = '--latency-bins'): Result<BinSpec> {
  const trimmed = text.trim();
  const bad = (detail: string): Result<BinSpec> =>
    fail([error('bad_bins', where, `\`${where}\` requires auto, levels, quantile:K (K from 2 to 100), width:W (W > 0) or edges:a,b,... (increasing numbers)${detail}, got ${show(text)}`)]);
  if (trimmed === 'auto') return ok({ kind: 'auto' });
  if (trimmed === 'levels') return ok({ kind: 'levels' });
  const colon = trimmed.indexOf(':');
  if (colon < 0) return bad('');
  const kind = trimmed.slice(0, colon).trim();
  const argument = trimmed.slice(colon + 1).trim();
  const number = (part: string): number | undefined => {
    if (!/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(part.trim())) return undefined;
    const value = Number(part);
    return Number.isFinite(value) ? value : undefined;
  };
  if (kind === 'quantile') {
    const bins = number(argument);
    if (bins === undefined || !Number.isInteger(bins) || bins < 2 || bins > 100) return bad('');
    return ok({ kind: 'quantile', bins });
  }
  if (kind === 'width') {
    const width = number(argument);
    if (width === undefined || !(width > 0)) return bad('');
    return ok({ kind: 'width', width });
  }
  if (kind === 'edges') {
    const edges = argument.split(',').map(number);
    if (edges.length === 0 || edges.some((edge) => edge === undefined)) return bad('');
    const values = edges as number[];
    if (values.some((edge, index) => index > 0 && !(edge > (values[index - 1] as number)))) return bad(' (each edge above the one before)');
    return ok({ kind: 'edges', edges: values });
  }
  return bad('');
}

function formatNumber(value: number): string {
  // Four significant digits: 47.25, 1.125, 247.8; the JSON keeps the exact ends.
  return String(Number(value.toPrecision(4)));
}

function binLabel(lower: number, upper: number, includesUpper: boolean, unit: string): string {
  const text = `[${formatNumber(lower)}, ${formatNumber(upper)}${includesUpper ? ']' : ')'}`;
  return unit === '' ? text : `${text} ${unit}`;
}

/** The number of cut points <= value (cuts ascending): the bin index. */
function binIndex(cuts: readonly number[], value: number): number {
  let low = 0;
  let high = cuts.length;
  while (low < high) {
    const middle = (low + high) >>> 1;
    if ((cuts[middle] as number) <= value) low = middle + 1;
    else high = middle;
  }
  return low;
}

/**
 * Group a numeric column. `name` and `unit` are used in the description and
 * labels (`latency`, `ms`). Returns an issue (`too_many_groups`) rather than
 * a grouping of more than {@link MAX_GROUPS} groups.
 */
export function groupNumeric(values: Float64Array, spec: BinSpec, name: string, unit: string, where: string): Result<Grouping> {
  const sorted = Float64Array.from(values).sort();
  const count = sorted.length;
  if (count === 0) return fail([error('no_rows', where, `grouping \`${name}\` requires at least one row, got none`)]);
  const minimum = sorted[0] as number;
  const maximum = sorted[count - 1] as number;
  let distinct = 0;
  for (let index = 0; index < count; index += 1) if (index === 0 || sorted[index] !== sorted[index - 1]) distinct += 1;
  const kind = spec.kind === 'auto' ? (distinct <= MAX_LEVELS ? 'levels' : 'quantile') : spec.kind;
  const tooMany = (groups: number): Result<Grouping> =>
    fail([error('too_many_groups', where, `grouping \`${name}\` requires at most ${MAX_GROUPS} groups, got ${groups}; choose wider bins`)]);

  if (kind === 'levels') {
    if (distinct > MAX_GROUPS) return tooMany(distinct);
    const levels: number[] = [];
    for (let index = 0; index < count; index += 1) if (index === 0 || sorted[index] !== sorted[index - 1]) levels.push(sorted[index] as number);
    const position = new Map(levels.map((level, index) => [level, index]));
    const codes = new Int32Array(values.length);
    const rows = new Array<number>(levels.length).fill(0);
    for (let index = 0; index < values.length; index += 1) {
      const code = position.get(values[index] as number) as number;
      codes[index] = code;
      rows[code] = (rows[code] ?? 0) + 1;
    }
    return ok({
      method: 'levels',
      description: `${name}: one group per value (${levels.length} distinct value${levels.length === 1 ? '' : 's'})`,
      groups: levels.map((level, index) => ({ label: String(level), value: level, lower: null, upper: null, includes_upper: false, rows: rows[index] ?? 0 })),
      codes,
    });
  }

  let cuts: number[];
  let description: string;
  if (kind === 'quantile') {
    const bins = spec.kind === 'quantile' ? spec.bins : DEFAULT_QUANTILE_BINS;
    cuts = [];
    for (let k = 1; k < bins; k += 1) {
      const cut = quantileSorted(sorted, k / bins, 7);
      if (cut > minimum && cut !== cuts[cuts.length - 1]) cuts.push(cut);
    }
    description = `${name}: ${bins} quantile bins (cut at the Hyndman & Fan type 7 quantiles k/${bins} of the rows' ${name}; ties merge bins), each [lower, upper), the last closed`;
  } else if (kind === 'width') {
    const width = spec.kind === 'width' ? spec.width : 1;
    const first = Math.floor(minimum / width);
    const last = Math.floor(maximum / width);
    if (last - first + 1 > MAX_GROUPS) return tooMany(last - first + 1);
    cuts = [];
    for (let k = first + 1; k <= last; k += 1) cuts.push(k * width);
    description = `${name}: fixed-width bins of ${formatNumber(width)}${unit === '' ? '' : ` ${unit}`}, [k·${formatNumber(width)}, (k+1)·${formatNumber(width)})`;
  } else {
    const edges = spec.kind === 'edges' ? spec.edges : [];
    if (edges.length + 1 > MAX_GROUPS) return tooMany(edges.length + 1);
    cuts = edges.filter((edge) => edge > minimum && edge <= maximum);
    description = `${name}: bins cut at ${edges.map(formatNumber).join(', ')}${unit === '' ? '' : ` ${unit}`}, each [lower, upper), the last closed`;
  }

  const rawCodes = new Int32Array(values.length);
  const rawRows = new Array<number>(cuts.length + 1).fill(0);
  for (let index = 0; index < values.length; index += 1) {
    const code = binIndex(cuts, values[index] as number);
    rawCodes[index] = code;
    rawRows[code] = (rawRows[code] ?? 0) + 1;
  }
  // Drop empty bins (width bins between clusters) and renumber.
  const renumber = new Int32Array(cuts.length + 1).fill(-1);
  const groups: Group[] = [];
  for (let bin = 0; bin <= cuts.length; bin += 1) {
    const rows = rawRows[bin] ?? 0;
    if (rows === 0) continue;
    renumber[bin] = groups.length;
    const isLast = bin === cuts.length;
    let lower: number;
    let upper: number;
    if (kind === 'width') {
      const width = spec.kind === 'width' ? spec.width : 1;
      const k = Math.floor(minimum / width) + bin;
      lower = k * width;
      upper = (k + 1) * width;
    } else {
      lower = bin === 0 ? minimum : (cuts[bin - 1] as number);
      upper = isLast ? maximum : (cuts[bin] as number);
    }
    const includesUpper = kind !== 'width' && isLast;
    groups.push({ label: binLabel(lower, upper, includesUpper, unit), value: null, lower, upper, includes_upper: includesUpper, rows });
  }
  const codes = rawCodes.map((code) => renumber[code] as number);
  return ok({ method: kind, description, groups, codes });
}

/** Group named levels (codes into `levels`), in the order the levels are given. */
export function groupLevels(levels: readonly string[], rowCodes: Int32Array, name: string): Grouping {
  const rows = new Array<number>(levels.length).fill(0);
  for (const code of rowCodes) rows[code] = (rows[code] ?? 0) + 1;
  const present = levels.map((_, index) => index).filter((index) => (rows[index] ?? 0) > 0);
  const renumber = new Int32Array(levels.length).fill(-1);
  present.forEach((level, index) => (renumber[level] = index));
  return {
    method: 'levels',
    description: `${name}: one group per level, in the order the file first names them (${present.length} level${present.length === 1 ? '' : 's'})`,
    groups: present.map((level) => ({ label: levels[level] as string, value: levels[level] as string, lower: null, upper: null, includes_upper: false, rows: rows[level] ?? 0 })),
    codes: rowCodes.map((code) => renumber[code] as number),
  };
}
