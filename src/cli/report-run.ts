/** `lagparity report`, run: one self-contained HTML page of the playtest, the model and the lobbies (options and help: `report-command.ts`). */
import { createHash } from 'node:crypto';
import { basename } from 'node:path';
import { type Result, error, fail } from '../issues.js';
import { kindOfTag } from '../formats/file-kinds.js';
import { withLines } from '../io/issue-lines.js';
import { readJsonFile } from '../io/read-json.js';
import { readTrialsFile } from '../io/read-trials.js';
import { safeParseSizeStudy } from '../plan/parse-size-study.js';
import { SIZE_STUDY_FORMAT } from '../plan/size-study-schema.js';
import type { SizeStudy } from '../plan/size-study-types.js';
import { writeFileAtomic } from '../io/write-file.js';
import { parseBinSpec } from '../summary/bins.js';
import { checkTelemetry, parseFieldSettings } from './field-inputs.js';
import { loadLobbies, loadModel, loadRules } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

export interface ReportOptions {
  trials: string;
  model: string;
  lobbies?: string[];
  rules?: string;
  out: string;
  force?: boolean;
  latencyBins: string;
  sizeStudy?: string;
  live?: string;
  liveMargin: string;
  liveBands: string;
}

async function loadSizeStudy(path: string): Promise<Result<SizeStudy>> {
  const read = await readJsonFile(path);
  if (!read.ok) return read;
  // A document of another kind gets one issue, not one per field it lacks (as every input's does).
  const tag = read.value !== null && typeof read.value === 'object' && !Array.isArray(read.value) ? (read.value as { format?: unknown }).format : undefined;
  if (kindOfTag(tag) !== undefined) {
    return fail([error('wrong_kind', `${read.file}:format`, `this input requires a size study (${SIZE_STUDY_FORMAT}, written by \`lagparity plan size --out\`), got a file whose \`format\` is ${JSON.stringify(tag)}: check which file goes where`)]);
  }
  const parsed = safeParseSizeStudy(read.value, read.file);
  return parsed.ok ? parsed : fail(withLines(parsed.issues, read.text ?? '', read.file));
}

export async function runReport(options: ReportOptions): Promise<number> {
  const bins = parseBinSpec(options.latencyBins, '--latency-bins');
  const liveSettings = parseFieldSettings(options.liveMargin, options.liveBands, '--live-margin', '--live-bands');
  if (!liveSettings.ok) {
    reportIssues(liveSettings.issues);
    return EXIT_BAD_INPUT;
  }
  // The digest is taken from the same bytes the reader parses: one read of the file.
  const hash = createHash('sha256');
  const [trials, model, rules, lobbies, sizeStudy] = await Promise.all([
    readTrialsFile(options.trials, { onChunk: (bytes) => hash.update(bytes) }),
    loadModel(options.model),
    loadRules(options.rules),
    options.lobbies === undefined || options.lobbies.length === 0 ? Promise.resolve(undefined) : loadLobbies(options.lobbies),
    options.sizeStudy === undefined ? Promise.resolve(undefined) : loadSizeStudy(options.sizeStudy),
  ]);
  const issues = [bins, trials, model, rules, ...(lobbies === undefined ? [] : [lobbies]), ...(sizeStudy === undefined ? [] : [sizeStudy])].flatMap((result) => (result.ok ? [] : result.issues));
  if (!bins.ok || !trials.ok || !model.ok || !rules.ok || (lobbies !== undefined && !lobbies.ok) || (sizeStudy !== undefined && !sizeStudy.ok)) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues(trials.warnings);
  // The field check of live telemetry, when asked for: its bad input stops the report before anything is written.
  let field;
  if (options.live !== undefined) {
    const checked = await checkTelemetry(options.live, options.model, model.value, options.rules === undefined ? null : rules.value, liveSettings.value, undefined);
    if (!checked.ok) {
      reportIssues(checked.issues);
      return EXIT_BAD_INPUT;
    }
    reportIssues(checked.warnings);
    field = checked.value;
  }
  // Loaded here, not at start-up: the charting library takes about half a second to import,
  // which every other command would otherwise pay.
  const { renderReport } = await import('../report/render-report.js');
  const report = await renderReport({
    trials: trials.value,
    model: model.value,
    modelName: basename(options.model),
    lobbies: lobbies?.ok ? lobbies.value.map(({ path, lobby }) => ({ name: path === '-' ? 'stdin' : basename(path), lobby })) : [],
    rules: rules.value,
    rulesName: options.rules === undefined ? 'the default rules' : basename(options.rules),
    trialsSha256: hash.digest('hex'),
    latencyBins: bins.value,
    ...(sizeStudy?.ok ? { sizeStudy: sizeStudy.value, sizeStudyName: basename(options.sizeStudy ?? '') } : {}),
    ...(field === undefined ? {} : { field }),
  });
  if (!report.ok) {
    reportIssues(report.issues);
    return EXIT_BAD_INPUT;
  }
  reportIssues(report.warnings);
  const written = await writeFileAtomic(options.out, report.value.html, { force: options.force ?? false });
  if (!written.ok) {
    reportIssues(written.issues);
    return EXIT_BAD_INPUT;
  }
  writeOut(`wrote ${options.out} (${report.value.charts.length} charts)`);
  return EXIT_OK;
}
