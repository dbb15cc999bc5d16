/**
 * Which values lagparity's own parsers made. The entry points (balanceLobby,
 * rankLobbies, chooseServer, the audit, MatchSession) check at run time, not
 * only in the types, that the model came from `compileModel` and the rules
 * from `compileRules`, and validate a lobby that did not come from
 * `safeParseLobby`: JavaScript callers, `as` casts and objects built by hand
 * would otherwise reach the solver with NaN, Infinity or a missing field.
 *
 * Parsed lobbies and rules are deeply frozen, so a value checked once cannot
 * change afterwards; a compiled model holds typed arrays, which cannot be
 * frozen, and is documented as read-only.
 */

const lobbies = new WeakSet<object>();
const serverLobbies = new WeakSet<object>();
const rules = new WeakSet<object>();
const models = new WeakSet<object>();

function deepFreeze<T>(value: T): T {
  if (value !== null && typeof value === 'object' && !Object.isFrozen(value)) {
    // An array's entries by index (Object.keys would make a string per entry: a lobby's sample
    // lists made that most of the freezing's cost); a number or string needs no freezing.
    if (Array.isArray(value)) {
      for (const entry of value as unknown[]) if (entry !== null && typeof entry === 'object') deepFreeze(entry);
    } else {
      for (const key of Object.keys(value)) deepFreeze((value as Record<string, unknown>)[key]);
    }
    Object.freeze(value);
  }
  return value;
}

function isIn(set: WeakSet<object>, value: unknown): boolean {
  return value !== null && typeof value === 'object' && set.has(value);
}

export function markLobby<T extends object>(value: T): T {
  lobbies.add(deepFreeze(value));
  return value;
}
export function markServerLobby<T extends object>(value: T): T {
  serverLobbies.add(deepFreeze(value));
  return value;
}
export function markRules<T extends object>(value: T): T {
  rules.add(deepFreeze(value));
  return value;
}
export function markModel<T extends object>(value: T): T {
  models.add(value);
  return value;
}

export const isParsedLobby = (value: unknown): boolean => isIn(lobbies, value);
export const isParsedServerLobby = (value: unknown): boolean => isIn(serverLobbies, value);
export const isCompiledRules = (value: unknown): boolean => isIn(rules, value);
export const isCompiledModel = (value: unknown): boolean => isIn(models, value);

/**
 * Run a parser on a value that may be hostile: a getter or a Proxy that
 * throws while it is read becomes an issue-carrying failure, never an
 * exception out of a `safeParse*` or `compile*` function. An exception from
 * a value that is plain data (it copies with structuredClone) is lagparity's
 * own fault and is thrown on, not disguised as a problem of the input.
 */
export function readSafely<T>(input: unknown, read: () => T, failed: (message: string) => T): T {
  try {
    return read();
  } catch (cause) {
    let plain = true;
    try {
      structuredClone(input);
    } catch {
      plain = false;
    }
    if (plain) throw cause;
    let message: string;
    try {
      message = cause instanceof Error ? cause.message : String(cause);
    } catch {
      message = 'an unreadable error';
    }
    return failed(message.slice(0, 200));
  }
}
