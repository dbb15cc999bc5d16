/** Parsing a lobby: `safeParseLobby` returns issues, `parseLobby` throws them. */
import { type Result, fail, ok, unwrap } from '../issues.js';
import { fromZodIssues } from './zod-issues.js';
import { lobbyFileSchema } from './lobby-file.js';
import type { LobbyFile } from './lobby-types.js';

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
