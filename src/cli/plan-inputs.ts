/**
 * The plan a `lagparity plan` command works on: the plan file (if one is
 * given), with every field an option sets replaced by the option's value,
 * validated by the plan's own schema. An issue about a field an option set
 * (or, without a file, any field) names the option; one about a field from
 * the file names the file and the field.
 */
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import { readJsonFile } from '../io/read-json.js';
import { withLines } from '../io/issue-lines.js';
import { type ValidPlan, safeParsePlan } from '../formats/plan.js';
import { PLAN_FORMAT } from '../formats/plan-types.js';
import { parseDecimal } from '../formats/plain-decimal.js';

/** The options both `plan` commands take: the plan's own fields. */
export interface PlanFieldOptions {
  label?: string;
  latency?: string;
  scale?: string;
  difficulty?: string;
  repetitions?: string;
  participants?: string;
  practice?: string;
  roundSeconds?: string;
  pauseSeconds?: string;
  attempts?: string;
  sessionLimit?: string;
  seed?: string;
}

/** The size study's fields as options (`plan size`). */
export interface SizeFieldOptions {
  playerSd?: string;
  hitRate?: string;
  changePer100ms?: string;
  scaleHitRate?: string;
  latencyXLogScale?: string;
  players?: string;
  tryRepetitions?: string;
  studies?: string;
  atLatency?: string;
  atDifficulty?: string;
  width?: string;
  widthStatistic?: string;
  power?: string;
  alpha?: string;
  terms?: string;
}

type Kind = 'text' | 'number' | 'numbers' | 'levels' | 'number-or-numbers' | 'range' | 'scale-rate' | 'names' | 'level';

interface FieldOption {
  readonly key: keyof PlanFieldOptions | keyof SizeFieldOptions;
  readonly option: string;
  readonly path: readonly string[];
  readonly kind: Kind;
}

/** Each option, the plan field it sets, and how its text reads. */
export const FIELD_OPTIONS: readonly FieldOption[] = [
  { key: 'label', option: '--label', path: ['label'], kind: 'text' },
  { key: 'latency', option: '--latency', path: ['latency_ms'], kind: 'numbers' },
  { key: 'scale', option: '--scale', path: ['scale'], kind: 'numbers' },
  { key: 'difficulty', option: '--difficulty', path: ['difficulty'], kind: 'levels' },
  { key: 'repetitions', option: '--repetitions', path: ['repetitions'], kind: 'number' },
  { key: 'participants', option: '--participants', path: ['participants'], kind: 'number' },
  { key: 'practice', option: '--practice', path: ['practice_rounds'], kind: 'number' },
  { key: 'roundSeconds', option: '--round-seconds', path: ['round_seconds'], kind: 'number' },
  { key: 'pauseSeconds', option: '--pause-seconds', path: ['pause_seconds'], kind: 'number' },
  { key: 'attempts', option: '--attempts', path: ['attempts_per_round'], kind: 'number' },
  { key: 'sessionLimit', option: '--session-limit', path: ['session_limit_minutes'], kind: 'number' },
  { key: 'seed', option: '--seed', path: ['seed'], kind: 'number' },
  { key: 'playerSd', option: '--player-sd', path: ['size_study', 'player_sd'], kind: 'number' },
  { key: 'hitRate', option: '--hit-rate', path: ['size_study', 'effects', 'hit_rate'], kind: 'number-or-numbers' },
  { key: 'changePer100ms', option: '--change-per-100ms', path: ['size_study', 'effects', 'change_per_100ms'], kind: 'number' },
  { key: 'scaleHitRate', option: '--scale-hit-rate', path: ['size_study', 'effects', 'scale_hit_rate'], kind: 'scale-rate' },
  { key: 'latencyXLogScale', option: '--latency-x-log-scale', path: ['size_study', 'effects', 'latency_x_log_scale'], kind: 'number' },
  { key: 'players', option: '--players', path: ['size_study', 'players'], kind: 'range' },
  { key: 'tryRepetitions', option: '--try-repetitions', path: ['size_study', 'try_repetitions'], kind: 'numbers' },
  { key: 'studies', option: '--studies', path: ['size_study', 'studies'], kind: 'number' },
  { key: 'atLatency', option: '--at-latency', path: ['size_study', 'at_latency_ms'], kind: 'number' },
  { key: 'atDifficulty', option: '--at-difficulty', path: ['size_study', 'at_difficulty'], kind: 'level' },
  { key: 'width', option: '--width', path: ['size_study', 'goal', 'interval_width'], kind: 'number' },
  { key: 'widthStatistic', option: '--width-statistic', path: ['size_study', 'goal', 'width_statistic'], kind: 'text' },
  { key: 'power', option: '--power', path: ['size_study', 'goal', 'latency_power'], kind: 'number' },
  { key: 'alpha', option: '--alpha', path: ['size_study', 'alpha'], kind: 'number' },
  { key: 'terms', option: '--terms', path: ['size_study', 'terms'], kind: 'names' },
];

const EXPECTED: Record<Kind, string> = {
  text: 'a text',
  number: 'a number',
  numbers: 'comma-separated numbers',
  levels: 'comma-separated numbers or names',
  'number-or-numbers': 'a number, or comma-separated numbers',
  range: 'FROM:TO:STEP, e.g. 8:48:8',
  'scale-rate': 'SCALE:HIT_RATE, e.g. 1.5:0.8',
  names: 'comma-separated names',
  level: 'a number or a name',
};

function numbers(parts: readonly string[]): number[] | undefined {
  const values = parts.map(parseDecimal);
  return values.every((value) => value !== undefined) ? (values as number[]) : undefined;
}

/** An option's text as the value the plan field holds, or undefined when it does not read as its kind. */
function readOption(kind: Kind, text: string): unknown {
  const parts = text.split(',').map((part) => part.trim()).filter((part) => part !== '');
  switch (kind) {
    case 'text':
      return text;
    case 'number':
      return parseDecimal(text);
    case 'numbers':
      return parts.length === 0 ? undefined : numbers(parts);
    case 'number-or-numbers': {
      const values = parts.length === 0 ? undefined : numbers(parts);
      return values?.length === 1 ? values[0] : values;
    }
    case 'levels':
      return parts.length === 0 ? undefined : (numbers(parts) ?? parts);
    case 'level':
      return parseDecimal(text) ?? (text.trim() === '' ? undefined : text.trim());
    case 'names':
      return parts.length === 0 ? undefined : parts;
    case 'range': {
      const values = numbers(text.split(':'));
      return values?.length === 3 ? { from: values[0], to: values[1], step: values[2] } : values?.length === 2 ? { from: values[0], to: values[1], step: 1 } : undefined;
    }
    case 'scale-rate': {
      const values = numbers(text.split(':'));
      return values?.length === 2 ? { scale: values[0], hit_rate: values[1] } : undefined;
    }
  }
}

function setAt(target: Record<string, unknown>, path: readonly string[], value: unknown): void {
  let node = target;
  path.slice(0, -1).forEach((key) => {
    const child = node[key];
    if (child === null || typeof child !== 'object' || Array.isArray(child)) node[key] = {};
    node = node[key] as Record<string, unknown>;
  });
  node[path[path.length - 1] as string] = value;
}

/** Locations of fields no single option sets, as the options that do, for a plan given by options alone. */
const GROUP_OPTIONS: Readonly<Record<string, string>> = {
  size_study: '--at-latency',
  'size_study.goal': '--width or --power',
  'size_study.effects': '--hit-rate, --change-per-100ms, --scale-hit-rate',
};

/** The issue's field path, from a location with no file part (`latency_ms[2]`, `size_study.goal`). */
function fieldOf(location: string): string[] {
  return location.split(/[.[\]]/).filter((part) => part !== '' && !/^\d+$/.test(part));
}

export interface LoadedPlan {
  readonly plan: ValidPlan;
  /** The plan file's name for messages (`plan.json`), or undefined when options alone gave the plan. */
  readonly file: string | undefined;
  /** Where a field is, for issues: `plan.json:field`, or, for a field an option set (or any without a file), the option. */
  readonly where: (field: string) => string;
}

/** The option that sets a field (`latency_ms[2]` -> `--latency`), or the options of a group (`size_study.goal`). */
function optionFor(location: string, set: ReadonlySet<string> | null): string | undefined {
  const path = fieldOf(location);
  const option = [...FIELD_OPTIONS]
    .filter((field) => field.path.every((part, index) => path[index] === part))
    .sort((a, b) => b.path.length - a.path.length)
    .find((field) => set === null || set.has(field.path.join('.')));
  if (option !== undefined) return option.option;
  return set === null ? GROUP_OPTIONS[path.join('.')] : undefined;
}

/**
 * Read the plan file (if `path` is given), apply the options, and validate.
 * Issues name the option for a field an option set, else `file:field`.
 */
export async function loadPlan(path: string | undefined, options: PlanFieldOptions & SizeFieldOptions): Promise<Result<LoadedPlan>> {
  let document: Record<string, unknown> = { format: PLAN_FORMAT };
  let file: string | undefined;
  let text = '';
  if (path !== undefined) {
    const read = await readJsonFile(path);
    if (!read.ok) return read;
    if (read.value === null || typeof read.value !== 'object' || Array.isArray(read.value)) {
      return fail([error('wrong_type', read.file, `a plan requires a JSON object (${PLAN_FORMAT}), got ${show(read.value)}`)]);
    }
    document = structuredClone(read.value as Record<string, unknown>);
    file = read.file;
    text = read.text ?? '';
  }
  const issues: Issue[] = [];
  const set = new Set<string>();
  for (const field of FIELD_OPTIONS) {
    const text = (options as Record<string, string | undefined>)[field.key];
    if (text === undefined) continue;
    const value = readOption(field.kind, text);
    if (value === undefined) {
      issues.push(error('invalid_option', field.option, `\`${field.option}\` requires ${EXPECTED[field.kind]}, got ${show(text)}`));
      continue;
    }
    setAt(document, field.path, value);
    set.add(field.path.join('.'));
  }
  if (issues.length > 0) return fail(issues);
  const where = (field: string) => optionFor(field, file === undefined ? null : set) ?? (file === undefined ? field : field === '(root)' ? file : `${file}:${field}`);
  const parsed = safeParsePlan(document);
  // Issues at a field of the file get its line, as every JSON input's do (io/issue-lines.ts).
  const placed = (list: readonly Issue[]) => {
    const located = list.map((issue) => ({ ...issue, location: where(issue.location) }));
    return file === undefined ? located : withLines(located, text, file);
  };
  if (!parsed.ok) return fail(placed(parsed.issues));
  return ok({ plan: parsed.value, file, where }, placed(parsed.warnings));
}
