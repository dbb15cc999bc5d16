/** `lagparity field-check`, run: check live telemetry against its model (options and help: `field-check-command.ts`). */
import { open } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { type Issue, error, show } from '../issues.js';
import { checkField } from '../field/check-field.js';
import { parseBandCuts } from '../field/latency-bands.js';
import type { RefitCommandInputs } from '../field/refit-commands.js';
import type { CompiledModel } from '../model/compile.js';
import { loadModel, loadRules } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';
import { progressLine, readGrouped } from './read-grouped.js';

export interface FieldCheckOptions {
  model: string;
  rules?: string;
  margin: string;
  bands: string;
  attribute?: string;
  json?: boolean;
}

export async function runFieldCheck(telemetry: string, options: FieldCheckOptions): Promise<number> {
  const issues: Issue[] = [];
  const margin = /^\d*\.?\d+$/.test(options.margin.trim()) ? Number(options.margin) : Number.NaN;
  if (!(margin > 0 && margin < 0.5)) issues.push(error('invalid_option', '--margin', `\`--margin\` requires a hit-probability gap above 0 and below 0.5, such as 0.02, got ${show(options.margin)}`));
  const bands = parseBandCuts(options.bands, '--bands');
  if (!bands.ok) issues.push(...bands.issues);
  const attribute = options.attribute;
  if (attribute !== undefined && attribute !== 'hit_area' && attribute !== 'timing_window') {
    issues.push(error('invalid_option', '--attribute', `\`--attribute\` requires hit_area or timing_window, got ${show(attribute)}`));
  }
  if (issues.length > 0 || !bands.ok) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  const [model, rules] = await Promise.all([loadModel(options.model), options.rules === undefined ? Promise.resolve(null) : loadRules(options.rules)]);
  if (!model.ok || (rules !== null && !rules.ok)) {
    reportIssues([...(model.ok ? [] : model.issues), ...(rules !== null && !rules.ok ? rules.issues : [])]);
    return EXIT_BAD_INPUT;
  }
  const progress = progressLine('field-check');
  const read = await readGrouped(telemetry, progress);
  progress.done();
  if (!read.ok) {
    reportIssues(read.issues);
    return EXIT_BAD_INPUT;
  }
  const { grouped, sha256 } = read.value;
  const report = checkField(grouped, model.value, {
    margin,
    bands: bands.value,
    rules: rules === null ? null : (rules.ok ? rules.value : null),
    ...(attribute === undefined ? {} : { attribute: attribute as 'hit_area' | 'timing_window' }),
    modelFile: basename(options.model),
    sha256,
    commands: await commandInputs(telemetry, options.model, model.value),
  });
  if (!report.ok) {
    reportIssues(report.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues([...read.warnings, ...report.warnings]);
  if (options.json) writeOut(JSON.stringify(report.value, null, 2));
  else {
    // The tables (cli-table3) load only for output to people.
    const { renderFieldCheck } = await import('./render-field-check.js');
    writeOut(renderFieldCheck(report.value));
  }
  return report.value.passed ? EXIT_OK : EXIT_FAILED_CHECK;
}

/** The paths for the refit commands: the model's training file is looked for beside the model, by the name its provenance gives. */
async function commandInputs(telemetry: string, modelPath: string, model: CompiledModel): Promise<RefitCommandInputs> {
  const trainingPath = join(dirname(modelPath), basename(model.source.provenance.file));
  const [trainingHeader, liveHeader] = await Promise.all([headerLine(trainingPath), headerLine(telemetry)]);
  return {
    telemetry,
    model: modelPath,
    training: trainingHeader === null ? null : { path: trainingPath, sameHeader: trainingHeader === liveHeader },
  };
}

/** The first line of a file (without a byte-order mark or CR), or null when it cannot be read. */
async function headerLine(path: string): Promise<string | null> {
  try {
    const handle = await open(path, 'r');
    try {
      const buffer = Buffer.alloc(64 * 1024);
      const { bytesRead } = await handle.read(buffer, 0, buffer.length, 0);
      const text = buffer.subarray(0, bytesRead).toString('utf8').replace(/^\uFEFF/, '');
      return text.split('\n', 1)[0]?.replace(/\r$/, '') ?? null;
    } finally {
      await handle.close();
    }
  } catch {
    return null;
  }
}
