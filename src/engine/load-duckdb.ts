/**
 * Loading embedded DuckDB (`@duckdb/node-api`), an optional peer dependency:
 * only Parquet files, globs of shards and `--latency-step` need it, so it is
 * imported here, on first use, and never by the library entry or a command
 * that reads one CSV file. When it is not installed the caller gets an issue
 * naming the package to add, not a stack trace.
 */
import { type Result, error, fail, ok } from '../issues.js';

/** The package and the version the project is tested with (the optional peer dependency in package.json). */
export const DUCKDB_PACKAGE = '@duckdb/node-api@1.5.6-r.1';

export type DuckDbModule = typeof import('@duckdb/node-api');

/** How the module is imported; tests pass one that fails to simulate its absence. */
export type DuckDbLoader = () => Promise<DuckDbModule>;

export const importDuckDb: DuckDbLoader = () => import('@duckdb/node-api');

/** Whether an import failed because the package is not installed (not because it failed to run). */
export function isModuleMissing(cause: unknown): boolean {
  if (!(cause instanceof Error)) return false;
  return /Cannot find (package|module)|ERR_MODULE_NOT_FOUND/.test(`${(cause as { code?: string }).code ?? ''} ${cause.message}`);
}

/** Import DuckDB, or the issue `missing_optional_package` (location: what needed it) saying what to install. */
export async function loadDuckDb(neededFor: string, loader: DuckDbLoader = importDuckDb): Promise<Result<DuckDbModule>> {
  try {
    return ok(await loader());
  } catch (cause) {
    if (!isModuleMissing(cause)) throw cause;
    return fail([
      error(
        'missing_optional_package',
        neededFor,
        `reading Parquet files, globs of shards and grouping at \`--latency-step\` requires the optional package ${DUCKDB_PACKAGE}, which is not installed: run \`npm install ${DUCKDB_PACKAGE}\` where lagparity is installed`,
      ),
    ]);
  }
}
