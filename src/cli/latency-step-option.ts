/** `--latency-step <ms>` (of `fit` and `grouping-sql`): the grouping's latency resolution. */
import { type Issue, error, show } from '../issues.js';

/** The resolution in ms: a finite number above 0 and at most 60,000 (the format's largest latency); an issue otherwise. */
export function latencyStepOption(text: string, issues: Issue[]): number {
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value) || value <= 0 || value > 60_000) {
    issues.push(error('invalid_option', '--latency-step', `\`--latency-step\` requires a number of ms above 0 and at most 60000, got ${show(text)}`));
  }
  return value;
}
