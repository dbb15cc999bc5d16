/**
 * The report's coefficient table: per column its term, the estimate with its
 * model standard error, z, two-sided normal p-value and Wald interval
 * (estimate +- critical x SE), and the robust (CR1) columns when there are
 * any; covariance matrices as nested rows.
 */
import { normalQuantile, twoSidedNormalPValue } from '../stats/distributions.js';
import type { BinomialFitEstimated } from './binomial-fit-types.js';
import type { TermDesign } from './design.js';
import type { CoefficientRow, IntervalEstimate } from './fit-report-types.js';
import type { TermName } from './terms.js';

export function termsOfColumns(design: Pick<TermDesign, 'columns'>, names: readonly string[]): TermName[] {
  const terms: TermName[] = [];
  for (const name of names) {
    const column = design.columns.find((entry) => entry.name === name);
    if (column !== undefined && !terms.includes(column.term)) terms.push(column.term);
  }
  return terms;
}

export function interval(estimate: number, standardError: number, critical: number): IntervalEstimate {
  const z = estimate / standardError;
  return {
    std_error: standardError,
    z,
    p_value: twoSidedNormalPValue(z),
    ci_lower: estimate - critical * standardError,
    ci_upper: estimate + critical * standardError,
  };
}

export function coefficientRows(design: Pick<TermDesign, 'columns'>, fit: Omit<BinomialFitEstimated, 'fitted'>): CoefficientRow[] {
  const critical = normalQuantile(0.975);
  return design.columns.map((column, j) => {
    const estimate = fit.coefficients[j] as number;
    return {
      name: column.name,
      term: column.term,
      estimate,
      ...interval(estimate, fit.standardErrors[j] as number, critical),
      robust: fit.robust === null ? null : interval(estimate, fit.robust.standardErrors[j] as number, critical),
    };
  });
}

export function square(matrix: Float64Array, size: number): number[][] {
  return Array.from({ length: size }, (_, a) => Array.from({ length: size }, (_, b) => matrix[a * size + b] as number));
}
