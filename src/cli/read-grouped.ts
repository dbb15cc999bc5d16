/**
 * Reading a trials file into groups for fitting, hashing its bytes in the
 * same pass, with a progress line: the one way `fit` and `field-check` read
 * trials, so a reader added for one serves both. A Parquet file, a glob of
 * shards or a latency resolution goes through embedded DuckDB
 * (`engine/read-with-duckdb.ts`, loaded only then); one CSV file without a
 * resolution through the built-in reader, its latencies exact.
 */
import { type Result, ok } from '../issues.js';
import { PART_WORKER_URL } from '../io/part-worker-url.js';
import { readGroupedTrialsFile } from '../io/read-trials.js';
import { mergeGroups } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import { DEFAULT_LATENCY_STEP_MS } from '../engine/grouping-sql.js';
import type { DuckDbLoader } from '../engine/load-duckdb.js';
import { needsEngine } from '../engine/needs-engine.js';
import type { ProgressLine } from './progress.js';

/** How {@link readGrouped} reads. */
export interface ReadGroupedOptions {
  /** Latency resolution of the grouping in ms (through DuckDB); default exact for one CSV file, {@link DEFAULT_LATENCY_STEP_MS} through DuckDB. */
  readonly latencyStepMs?: number;
  /** `attempts`: hits/attempts rows are counts of independent attempts (the grouping statement's output), fitted as the attempts would be. */
  readonly counts?: 'rounds' | 'attempts';
  /** How DuckDB is imported (tests). */
  readonly loader?: DuckDbLoader;
  /**
   * Read Parquet and globs through DuckDB (default true). `field-check` says false: its bands need each
   * row's exact latency, which the grouping rounds, so it reads one CSV file as before.
   */
  readonly engine?: boolean;
  /** Threads for the built-in reader (see `ReadTrialsOptions.threads`); default 1. */
  readonly threads?: number;
}

/** Read the trials straight into groups, hashing the bytes read. */
export async function readGrouped(path: string, progress: ProgressLine, options: ReadGroupedOptions = {}): Promise<Result<{ grouped: GroupedTrials; sha256: string }>> {
  const read = await readGroupedSource(path, progress, options);
  if (!read.ok || options.counts !== 'attempts' || read.value.grouped.shape === 'per_attempt') return read;
  // Counts of attempts: merged like attempts and fitted with the Bernoulli likelihood (n = attempts), as the rows they count.
  const { grouped, sha256 } = read.value;
  return ok({ grouped: { ...grouped, shape: 'per_attempt', groups: mergeGroups(grouped.groups) }, sha256 }, read.warnings);
}

async function readGroupedSource(path: string, progress: ProgressLine, options: ReadGroupedOptions): Promise<Result<{ grouped: GroupedTrials; sha256: string }>> {
  if (options.engine !== false && (options.latencyStepMs !== undefined || needsEngine(path))) {
    const { readGroupedWithDuckDb } = await import('../engine/read-with-duckdb.js');
    const read = await readGroupedWithDuckDb(path, {
      latencyStepMs: options.latencyStepMs ?? DEFAULT_LATENCY_STEP_MS,
      onProgress: (stage) => progress.update(() => stage),
      ...(options.loader === undefined ? {} : { loader: options.loader }),
    });
    return read.ok ? ok({ grouped: read.value.grouped, sha256: read.value.sha256 }, read.warnings) : read;
  }
  const read = await readGroupedTrialsFile(path, {
    onProgress: (rows) => progress.update(() => `read ${rows.toLocaleString('en-GB')} rows`),
    sha256: true,
    ...(options.threads === undefined ? {} : { threads: options.threads, split: { workerUrl: PART_WORKER_URL } }),
  });
  if (!read.ok) return read;
  const { sha256, ...grouped } = read.value;
  return ok({ grouped, sha256: sha256 ?? '' }, read.warnings);
}
