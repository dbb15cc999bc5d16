/**
 * A p-value for people, the same in the command line and the report: below
 * 1e-16 it is shown as "< 1e-16" (double-precision arithmetic cannot tell
 * smaller tail probabilities of a fitted model apart from rounding, and the
 * exact value carries no meaning there), below 0.001 in scientific notation
 * with two significant digits, else with three decimals.
 */
export const P_VALUE_FLOOR = 1e-16;

export function pValueText(value: number | null): string {
  if (value === null || Number.isNaN(value)) return '-';
  if (value < P_VALUE_FLOOR) return '< 1e-16';
  if (value < 0.001) return value.toExponential(1);
  return value.toFixed(3);
}
