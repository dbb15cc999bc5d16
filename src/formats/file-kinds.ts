/**
 * The kinds of input file the tool reads, and the `format` tags that name
 * the JSON ones: the formats' own list, which the CLI's `validate` command
 * (its help and its run code alike) takes from here.
 */
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
