/**
 * The kinds of input file the tool reads, and the `format` tags that name
 * the JSON ones: the formats' own list, which the CLI's `validate` command
 * (its help and its run code alike) takes from here.
 */
import { type Issue, at, error } from '../issues.js';
import { LOBBY_FORMAT } from './lobby-types.js';
import { MODEL_FORMAT } from './model-format.js';
import { PLAN_FORMAT } from './plan-types.js';
import { RULES_FORMAT } from './rules-types.js';
import { SERVER_LOBBY_FORMAT } from './server-lobby-types.js';

export type FileKind = 'trials' | 'lobby' | 'lobby-servers' | 'model' | 'rules' | 'plan';
export const FILE_KINDS: readonly FileKind[] = ['trials', 'lobby', 'lobby-servers', 'model', 'rules', 'plan'];

/** JSON kinds by their `format` tag (a trials file is CSV, told by its extension). */
export const KIND_OF_TAG: Readonly<Record<string, FileKind>> = {
  [LOBBY_FORMAT]: 'lobby',
  [SERVER_LOBBY_FORMAT]: 'lobby-servers',
  [MODEL_FORMAT]: 'model',
  [RULES_FORMAT]: 'rules',
  [PLAN_FORMAT]: 'plan',
};

/** The kind a `format` tag names, or undefined: own keys only (a tag "constructor" or "toString" named Object's functions). */
export function kindOfTag(tag: unknown): FileKind | undefined {
  return typeof tag === 'string' && Object.hasOwn(KIND_OF_TAG, tag) ? KIND_OF_TAG[tag] : undefined;
}

const KIND_NAMES: Readonly<Record<FileKind, string>> = {
  trials: 'a trials file',
  lobby: 'a lobby',
  'lobby-servers': 'a server-choice lobby',
  model: 'a model',
  rules: 'a rules file',
  plan: 'a playtest plan',
};

/**
 * One issue when `input` is a document of another known kind (a rules file
 * given as the model): its `format` tag says so, and listing every field it
 * lacks would bury that. Null otherwise, when the document's own checks speak.
 */
export function wrongKind(input: unknown, expected: FileKind, file: string | undefined): Issue | null {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) return null;
  let tag: unknown;
  try {
    tag = (input as { format?: unknown }).format;
  } catch {
    return null;
  }
  const kind = kindOfTag(tag);
  if (kind === undefined || kind === expected) return null;
  return error('wrong_kind', at(file, 'format'), `this input requires ${KIND_NAMES[expected]}, got ${KIND_NAMES[kind]} (its \`format\` is ${JSON.stringify(tag)}): check which file goes where`);
}
