/** `lagparity validate`: check input files against their formats before a match. */
import { basename, extname } from 'node:path';
import type { Command } from 'commander';
import { type Issue, error, show } from '../issues.js';
import { readJsonFile } from '../io/read-json.js';
import { readTrialsFile } from '../io/read-trials.js';
import { safeParseLobby } from '../formats/lobby.js';
import { compileModel } from '../model/compile.js';
import { compileRules } from '../solver/rules.js';
import { LOBBY_FORMAT } from '../formats/lobby-file.js';
import { MODEL_FORMAT } from '../formats/model-file.js';
import { RULES_FORMAT } from '../formats/rules-file.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

type Kind = 'trials' | 'lobby' | 'model' | 'rules';
const KINDS: readonly Kind[] = ['trials', 'lobby', 'model', 'rules'];
const TAGS: Record<string, Kind> = { [LOBBY_FORMAT]: 'lobby', [MODEL_FORMAT]: 'model', [RULES_FORMAT]: 'rules' };

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
  const detected = kind ?? (typeof tag === 'string' ? TAGS[tag] : undefined);
  if (detected === undefined) {
    const known = Object.keys(TAGS).map((name) => show(name)).join(', ');
    return { path, kind: null, valid: false, warnings: [], issues: [error('unknown_format', `${read.file}:format`, `\`format\` requires one of ${known} (or a .csv trials file), got ${show(tag)}`)] };
  }
  const parsed = detected === 'lobby' ? safeParseLobby(read.value, read.file) : detected === 'model' ? compileModel(read.value, read.file) : compileRules(read.value, read.file);
  return parsed.ok ? { path, kind: detected, valid: true, issues: [], warnings: parsed.warnings } : { path, kind: detected, valid: false, issues: parsed.issues, warnings: [] };
}

export function registerValidate(program: Command): void {
  program
    .command('validate')
    .description('Check trials, lobby, model and rules files against their formats; report every problem with its place.')
    .argument('<files...>', 'files to check: *.csv trials, or JSON lobby / model / rules files (told apart by their `format` tag)')
    .option('--kind <kind>', `read every file as this kind: ${KINDS.join(', ')}`)
    .option('--json', 'write one JSON document (lagparity/validation@1) to stdout')
    .addHelpText('after', '\nExample:\n  lagparity validate matches/*.lobby.json matches/league-rules.json matches/playtest-trials.csv\n\nExit codes: 0 every file valid (warnings allowed); 2 some file invalid.')
    .action(async (files: string[], options: { kind?: string; json?: boolean }) => {
      if (options.kind !== undefined && !(KINDS as readonly string[]).includes(options.kind)) {
        reportIssues([error('invalid_option', '--kind', `\`--kind\` requires one of ${KINDS.join(', ')}, got ${show(options.kind)}`)]);
        process.exitCode = EXIT_BAD_INPUT;
        return;
      }
      const verdicts: FileVerdict[] = [];
      for (const file of files) verdicts.push(await validateFile(file, options.kind as Kind | undefined));
      for (const verdict of verdicts) reportIssues([...verdict.issues, ...verdict.warnings]);
      if (options.json) writeOut(JSON.stringify({ format: 'lagparity/validation@1', files: verdicts }, null, 2));
      else writeOut(verdicts.map((verdict) => `${verdict.valid ? 'valid  ' : 'INVALID'} ${verdict.kind ?? '?'} ${basename(verdict.path)}${verdict.warnings.length > 0 ? ` (${verdict.warnings.length} warning${verdict.warnings.length === 1 ? '' : 's'})` : ''}`).join('\n'));
      process.exitCode = verdicts.every((verdict) => verdict.valid) ? EXIT_OK : EXIT_BAD_INPUT;
    });
}
