/** What `field-check` and `report --live` share: their options, the refit commands' paths, and the check of a telemetry file. */
import { open } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import { checkFieldOnThreads, startCalibrationWorkers } from '../field/check-field-threads.js';
import type { FieldCheckReport } from '../field/field-types.js';
import { parseBandCuts } from '../field/latency-bands.js';
import type { RefitCommandInputs } from '../field/refit-commands.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { progressLine } from './progress.js';
import { readGrouped } from './read-grouped.js';
import { needsEngine } from '../engine/needs-engine.js';

/**
 * The latency resolution at which field-check groups Parquet files and globs (through DuckDB):
 * 0.001 ms returns any latency recorded to three decimals as the very double the CSV reader
 * parses (engine/grouping-sql.ts), so every row lands in the band it would from a CSV file.
 * fit's default of 1 ms would move rows within half a millisecond of a cut across it.
 */
export const FIELD_LATENCY_STEP_MS = 0.001;

export interface FieldSettings {
  readonly margin: number;
  readonly bands: readonly number[];
}

/** Parse the margin and band cuts of the options named `marginOption` and `bandsOption`. */
export function parseFieldSettings(marginText: string, bandsText: string, marginOption: string, bandsOption: string): Result<FieldSettings> {
  const issues: Issue[] = [];
  const margin = /^\d*\.?\d+$/.test(marginText.trim()) ? Number(marginText) : Number.NaN;
  if (!(margin > 0 && margin < 0.5)) issues.push(error('invalid_option', marginOption, `\`${marginOption}\` requires a hit-probability gap above 0 and below 0.5, such as 0.02, got ${show(marginText)}`));
  const bands = parseBandCuts(bandsText, bandsOption);
  if (!bands.ok) issues.push(...bands.issues);
  return issues.length > 0 || !bands.ok ? fail(issues) : ok({ margin, bands: bands.value });
}

/** Read a telemetry file and check it; its read warnings come with the report's. */
export async function checkTelemetry(
  telemetry: string,
  modelPath: string,
  model: CompiledModel,
  rules: CompiledRules | null,
  settings: FieldSettings,
  attribute: 'hit_area' | 'timing_window' | undefined,
  threads = 1,
): Promise<Result<FieldCheckReport>> {
  // Parquet files and globs are read through DuckDB, as fit reads them, but grouped at
  // FIELD_LATENCY_STEP_MS: the bands need each row's latency where the CSV reader puts it.
  // The fits' workers load while the file is read.
  const workers = startCalibrationWorkers(threads);
  const progress = progressLine('lagparity field-check');
  const read = await readGrouped(telemetry, progress, needsEngine(telemetry) ? { latencyStepMs: FIELD_LATENCY_STEP_MS } : { engine: false }).catch(async (thrown: unknown) => {
    await workers?.stop();
    throw thrown;
  });
  progress.done();
  if (!read.ok) {
    await workers?.stop();
    return read;
  }
  const { grouped, sha256 } = read.value;
  const options = {
    margin: settings.margin,
    bands: settings.bands,
    rules,
    ...(attribute === undefined ? {} : { attribute }),
    modelFile: basename(modelPath),
    sha256,
    commands: await commandInputs(telemetry, modelPath, model),
  };
  const report = await checkFieldOnThreads(grouped, model, options, threads, { workers });
  return report.ok ? ok(report.value, [...read.warnings, ...report.warnings]) : report;
}

/** The paths for the refit commands: the model's training file is looked for beside the model, by the name its provenance gives. */
async function commandInputs(telemetry: string, modelPath: string, model: CompiledModel): Promise<RefitCommandInputs> {
  const trainingPath = join(dirname(modelPath), basename(model.source.provenance.file));
  // A Parquet file or glob has no header line to compare: the combined refit is offered for CSV alone.
  const [trainingHeader, liveHeader] = await Promise.all([headerLine(trainingPath), needsEngine(telemetry) ? Promise.resolve(null) : headerLine(telemetry)]);
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
