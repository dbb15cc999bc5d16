/**
 * Compile-time checks that a hand-written type and a schema's inferred type
 * are the same. The package's published declarations must not mention zod
 * (a matchmaker's install does not carry it: it is bundled), so each format's
 * type is written out beside its schema and checked against it here.
 */

/** true when A and B are the same type (the "mutually assignable under any context" test of TypeScript issue #27024). */
export type Same<A, B> = (<T>() => T extends A ? 1 : 2) extends <T>() => T extends B ? 1 : 2 ? true : false;

/** Compiles only for `true`: `export type _Check = Assert<Same<A, B>>`. */
export type Assert<T extends true> = T;
