/** `lagparity field-check`, run: check live telemetry against its model (options and help: `field-check-command.ts`). */
import { error, show } from '../issues.js';
import { checkTelemetry, parseFieldSettings } from './field-inputs.js';
import { loadModel, loadRules } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';
import { FIT_THREADS_CAP, threadCount } from './thread-count.js';

export interface FieldCheckOptions {
  model: string;
  rules?: string;
  margin: string;
  bands: string;
  attribute?: string;
  json?: boolean;
  threads?: string;
}

export async function runFieldCheck(telemetry: string, options: FieldCheckOptions): Promise<number> {
  const settings = parseFieldSettings(options.margin, options.bands, '--margin', '--bands');
  const attribute = options.attribute;
  const issues = settings.ok ? [] : [...settings.issues];
  if (attribute !== undefined && attribute !== 'hit_area' && attribute !== 'timing_window') {
    issues.push(error('invalid_option', '--attribute', `\`--attribute\` requires hit_area or timing_window, got ${show(attribute)}`));
  }
  const threads = threadCount(options.threads, issues, FIT_THREADS_CAP);
  if (issues.length > 0 || !settings.ok) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  const [model, rules] = await Promise.all([loadModel(options.model), options.rules === undefined ? Promise.resolve(null) : loadRules(options.rules)]);
  if (!model.ok || (rules !== null && !rules.ok)) {
    reportIssues([...(model.ok ? [] : model.issues), ...(rules !== null && !rules.ok ? rules.issues : [])]);
    return EXIT_BAD_INPUT;
  }
  const report = await checkTelemetry(telemetry, options.model, model.value, rules?.ok ? rules.value : null, settings.value, attribute as 'hit_area' | 'timing_window' | undefined, threads);
  if (!report.ok) {
    reportIssues(report.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues(report.warnings);
  if (options.json) writeOut(JSON.stringify(report.value, null, 2));
  else {
    // The tables (cli-table3) load only for output to people.
    const { renderFieldCheck } = await import('./render-field-check.js');
    writeOut(renderFieldCheck(report.value));
  }
  return report.value.passed ? EXIT_OK : EXIT_FAILED_CHECK;
}
