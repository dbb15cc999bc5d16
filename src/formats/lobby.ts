/** Parsing a lobby (or a server-choice lobby): `safeParse*` returns issues, `parse*` throws them. */
import { type Result, ok, unwrap } from '../issues.js';
import { markLobby, markServerLobby } from '../validated.js';
import { parseDocument } from './parse-document.js';
import { lobbyFileSchema } from './lobby-file.js';
import type { LobbyFile } from './lobby-types.js';
import { serverLobbyFileSchema } from './server-lobby-file.js';
import type { ServerLobbyFile } from './server-lobby-types.js';

declare const lobbyBrand: unique symbol;
/** A lobby that passed validation. */
export type ValidLobby = LobbyFile & { readonly [lobbyBrand]: true };

/** Validate a lobby document (already parsed from JSON). `file` names the source in issues. */
export function safeParseLobby(input: unknown, file?: string): Result<ValidLobby> {
  return parseDocument(input, file, 'lobby', lobbyFileSchema, (data) => ok(markLobby(data) as ValidLobby));
}

/** Like `safeParseLobby`, but throws a `LagparityInputError` carrying the issues. */
export function parseLobby(input: unknown, file?: string): ValidLobby {
  return unwrap(safeParseLobby(input, file));
}

declare const serverLobbyBrand: unique symbol;
/** A server-choice lobby that passed validation. */
export type ValidServerLobby = ServerLobbyFile & { readonly [serverLobbyBrand]: true };

/** Validate a server-choice lobby (`lagparity/lobby-servers@1`, already parsed from JSON). `file` names the source in issues. */
export function safeParseServerLobby(input: unknown, file?: string): Result<ValidServerLobby> {
  return parseDocument(input, file, 'lobby-servers', serverLobbyFileSchema, (data) => ok(markServerLobby(data) as ValidServerLobby));
}

/** Like `safeParseServerLobby`, but throws a `LagparityInputError` carrying the issues. */
export function parseServerLobby(input: unknown, file?: string): ValidServerLobby {
  return unwrap(safeParseServerLobby(input, file));
}
