/** Parsing a lobby (or a server-choice lobby): `safeParse*` returns issues, `parse*` throws them. */
import { type Result, fail, ok, unwrap } from '../issues.js';
import { fromZodIssues } from './zod-issues.js';
import { lobbyFileSchema } from './lobby-file.js';
import type { LobbyFile } from './lobby-types.js';
import { serverLobbyFileSchema } from './server-lobby-file.js';
import type { ServerLobbyFile } from './server-lobby-types.js';

declare const lobbyBrand: unique symbol;
/** A lobby that passed validation. */
export type ValidLobby = LobbyFile & { readonly [lobbyBrand]: true };

/** Validate a lobby document (already parsed from JSON). `file` names the source in issues. */
export function safeParseLobby(input: unknown, file?: string): Result<ValidLobby> {
  const parsed = lobbyFileSchema.safeParse(input);
  if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
  return ok(parsed.data as ValidLobby);
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
  const parsed = serverLobbyFileSchema.safeParse(input);
  if (!parsed.success) return fail(fromZodIssues(parsed.error.issues, input, file));
  return ok(parsed.data as ValidServerLobby);
}

/** Like `safeParseServerLobby`, but throws a `LagparityInputError` carrying the issues. */
export function parseServerLobby(input: unknown, file?: string): ValidServerLobby {
  return unwrap(safeParseServerLobby(input, file));
}
