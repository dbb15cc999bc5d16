/** `lagparity validate`, run: check input files against their formats before a match (options and help: `validate-command.ts`). */
import { basename, extname } from 'node:path';
import { type Issue, error, show } from '../issues.js';
import { readJsonFile } from '../io/read-json.js';
import { withLines } from '../io/issue-lines.js';
import { readTrialsFile } from '../io/read-trials.js';
import { safeParseLobby, safeParseServerLobby } from '../formats/lobby.js';
import { compileModel } from '../model/compile.js';
import { compileRules } from '../solver/rules.js';
import { safeParsePlan } from '../formats/plan.js';
import { FILE_KINDS as KINDS, type FileKind as Kind, KIND_OF_TAG as TAGS, kindOfTag } from '../formats/file-kinds.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

export interface FileVerdict {
  readonly path: string;
  readonly kind: Kind | null;
  readonly valid: boolean;
  readonly issues: readonly Issue[];
  readonly warnings: readonly Issue[];
}

/** Validate one file; the kind comes from `--kind`, the extension (.csv) or the JSON `format` tag. */
export async function validateFile(path: string, forced: Kind | undefined): Promise<FileVerdict> {
  const kind = forced ?? (extname(path).toLowerCase() === '.csv' ? 'trials' : undefined);
  if (kind === 'trials') {
    const result = await readTrialsFile(path);
    return result.ok ? { path, kind, valid: true, issues: [], warnings: result.warnings } : { path, kind, valid: false, issues: result.issues, warnings: [] };
  }
  const read = await readJsonFile(path);
  if (!read.ok) return { path, kind: kind ?? null, valid: false, issues: read.issues, warnings: [] };
  const tag = read.value !== null && typeof read.value === 'object' && !Array.isArray(read.value) ? (read.value as { format?: unknown }).format : undefined;
  const detected = kind ?? kindOfTag(tag);
  if (detected === undefined) {
    const known = Object.keys(TAGS).map((name) => show(name)).join(', ');
    return { path, kind: null, valid: false, warnings: [], issues: [error('unknown_format', `${read.file}:format`, `\`format\` requires ${typeof tag === 'string' || tag === undefined ? '' : 'a string, '}one of ${known} (or a .csv trials file), got ${show(tag)}`)] };
  }
  const checked =
    detected === 'lobby'
      ? safeParseLobby(read.value, read.file)
      : detected === 'lobby-servers'
        ? safeParseServerLobby(read.value, read.file)
        : detected === 'model'
          ? compileModel(read.value, read.file)
          : detected === 'plan'
            ? safeParsePlan(read.value, read.file)
            : compileRules(read.value, read.file);
  const text = read.text ?? '';
  return checked.ok
    ? { path, kind: detected, valid: true, issues: [], warnings: withLines(checked.warnings, text, read.file) }
    : { path, kind: detected, valid: false, issues: withLines(checked.issues, text, read.file), warnings: [] };
}

export interface ValidateOptions {
  kind?: string;
  json?: boolean;
}

export async function runValidate(files: string[], options: ValidateOptions): Promise<number> {
  if (options.kind !== undefined && !(KINDS as readonly string[]).includes(options.kind)) {
    reportIssues([error('invalid_option', '--kind', `\`--kind\` requires one of ${KINDS.join(', ')}, got ${show(options.kind)}`)]);
    return EXIT_BAD_INPUT;
  }
  const verdicts: FileVerdict[] = [];
  for (const file of files) verdicts.push(await validateFile(file, options.kind as Kind | undefined));
  for (const verdict of verdicts) reportIssues([...verdict.issues, ...verdict.warnings]);
  if (options.json) writeOut(JSON.stringify({ format: 'lagparity/validation@1', files: verdicts }, null, 2));
  else writeOut(verdicts.map((verdict) => `${verdict.valid ? 'valid  ' : 'INVALID'} ${verdict.kind ?? '?'} ${basename(verdict.path)}${verdict.warnings.length > 0 ? ` (${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'})` : ''}`).join('\n'));
  return verdicts.every((verdict) => verdict.valid) ? EXIT_OK : EXIT_BAD_INPUT;
}
