/**
 * The model's terms: which covariates enter the linear predictor, and how.
 *
 * A term list is written as comma-separated names, e.g.
 * `latency,log_scale,difficulty,latency_x_log_scale`. The intercept is
 * included unless the list contains `no_intercept`. An interaction of two
 * covariates is their names joined by `_x_`. The scale enters either raw
 * (`scale`) or as its natural logarithm (`log_scale`), never both.
 *
 * Difficulty is numeric (one column) or a set of named levels, dummy-coded
 * against a reference level (one column per other level).
 */
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';

export const TERM_NAMES = [
  'intercept',
  'latency',
  'scale',
  'log_scale',
  'difficulty',
  'latency_x_scale',
  'latency_x_log_scale',
  'latency_x_difficulty',
  'scale_x_difficulty',
  'log_scale_x_difficulty',
] as const;

export type TermName = (typeof TERM_NAMES)[number];

/** The default terms: logit of hit probability on latency, log scale, difficulty and latency x log scale. */
export const DEFAULT_TERMS: readonly TermName[] = ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'];

export type DifficultyCoding =
  | { readonly kind: 'numeric' }
  | { readonly kind: 'levels'; readonly levels: readonly string[]; readonly reference: string };

/** One column of the design: a product of at most one factor of each covariate. */
export interface DesignColumn {
  readonly name: string;
  readonly term: TermName;
  readonly latency: boolean;
  readonly scale: boolean;
  /** null: no difficulty factor; 'value': the numeric difficulty; otherwise the indicator of that level. */
  readonly difficulty: null | 'value' | { readonly level: string };
}

/** Which covariates a term involves; used by likelihood-ratio tests and by checks. */
export function termFactors(term: TermName): { latency: boolean; scale: boolean; difficulty: boolean } {
  return {
    latency: term.includes('latency'),
    scale: term.includes('scale'),
    difficulty: term.includes('difficulty'),
  };
}

/** How the scale enters the model: raw, logarithm, or not at all. */
export function scaleForm(terms: readonly TermName[]): 'log' | 'raw' | 'none' {
  if (terms.some((term) => term === 'log_scale' || term.startsWith('log_scale_') || term.endsWith('_log_scale'))) return 'log';
  if (terms.some((term) => termFactors(term).scale)) return 'raw';
  return 'none';
}

/** Parse a term list such as `latency,log_scale,difficulty,latency_x_log_scale`. */
export function parseTermList(text: string, where = '--terms'): Result<TermName[]> {
  const names = text.split(',').map((part) => part.trim()).filter((part) => part !== '');
  const issues: Issue[] = [];
  let intercept = true;
  const terms: TermName[] = [];
  for (const name of names) {
    if (name === 'no_intercept') {
      intercept = false;
      continue;
    }
    if (!(TERM_NAMES as readonly string[]).includes(name)) {
      issues.push(error('unknown_term', where, `\`${where}\` requires term names from ${TERM_NAMES.join(', ')} (or no_intercept), got ${show(name)}`));
      continue;
    }
    if (!terms.includes(name as TermName)) terms.push(name as TermName);
  }
  if (intercept && !terms.includes('intercept')) terms.unshift('intercept');
  if (!intercept) {
    const position = terms.indexOf('intercept');
    if (position >= 0) terms.splice(position, 1);
  }
  const checked = checkTerms(terms, where);
  if (issues.length > 0 || !checked.ok) return fail([...issues, ...(checked.ok ? [] : checked.issues)]);
  return ok(terms);
}

/** A term set must be non-empty and use one form of the scale. */
export function checkTerms(terms: readonly TermName[], where: string): Result<readonly TermName[]> {
  if (terms.length === 0) return fail([error('no_terms', where, `\`${where}\` requires at least one term, got none`)]);
  const repeated = terms.findIndex((term, index) => terms.indexOf(term) !== index);
  if (repeated >= 0) return fail([error('duplicate_term', `${where}[${repeated}]`, `\`terms\` requires each term once, got ${show(terms[repeated])} again`)]);
  const raw = terms.some((term) => termFactors(term).scale && !term.includes('log_scale'));
  const log = terms.some((term) => term.includes('log_scale'));
  if (raw && log) {
    return fail([error('mixed_scale_terms', where, `\`${where}\` requires the scale raw or as log_scale, not both, got ${show(terms.join(','))}`)]);
  }
  return ok(terms);
}

/** The design columns of a term list under a difficulty coding, in coefficient order. */
export function designColumns(terms: readonly TermName[], coding: DifficultyCoding): DesignColumn[] {
  const columns: DesignColumn[] = [];
  for (const term of terms) {
    const factors = termFactors(term);
    const base = { term, latency: factors.latency, scale: factors.scale };
    if (term === 'intercept') {
      columns.push({ name: 'intercept', term, latency: false, scale: false, difficulty: null });
    } else if (!factors.difficulty) {
      columns.push({ ...base, name: term, difficulty: null });
    } else if (coding.kind === 'numeric') {
      columns.push({ ...base, name: term, difficulty: 'value' });
    } else {
      for (const level of coding.levels) {
        if (level === coding.reference) continue;
        columns.push({ ...base, name: `${term}[${level}]`, difficulty: { level } });
      }
    }
  }
  return columns;
}

/** The value of the scale as it enters the model. */
export function scaleTermValue(form: 'log' | 'raw' | 'none', scale: number): number {
  return form === 'log' ? Math.log(scale) : scale;
}

/** The inverse of `scaleTermValue`. */
export function scaleFromTermValue(form: 'log' | 'raw' | 'none', value: number): number {
  return form === 'log' ? Math.exp(value) : value;
}

/**
 * The value of one design column at a covariate point. `difficulty` is the
 * numeric difficulty or the level name, per the coding.
 */
export function columnValue(
  column: DesignColumn,
  latency: number,
  scaleTerm: number,
  difficulty: number | string,
): number {
  let value = 1;
  if (column.latency) value *= latency;
  if (column.scale) value *= scaleTerm;
  if (column.difficulty === 'value') value *= typeof difficulty === 'number' ? difficulty : Number.NaN;
  else if (column.difficulty !== null) value *= difficulty === column.difficulty.level ? 1 : 0;
  return value;
}
