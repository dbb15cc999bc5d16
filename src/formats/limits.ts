/** Limits shared by several formats, in a module of their own so that readers can use them without loading a schema library. */

/** The largest latency any file may hold, in milliseconds (one minute). */
export const MAX_LATENCY_MS = 60_000;
