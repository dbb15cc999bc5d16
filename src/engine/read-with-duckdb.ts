/**
 * Reading trials from Parquet files and globs of CSV or Parquet shards
 * through embedded DuckDB, grouped by the statement of `grouping-sql.ts`:
 * DuckDB scans the rows (in parallel, out of core) and only the grouped
 * counts come back, batch by batch into a {@link GroupAccumulator}, so memory
 * follows the groups, never the rows.
 *
 * The checks are those of the CSV format (docs/formats.md): every file must
 * have `latency_ms`, `scale`, `difficulty` and `hit` (or `hits` and
 * `attempts`) with numeric types (`difficulty` also text; `hit` also
 * boolean), the same columns in every file, and values in range (latency 0
 * to 60,000 ms, scale above 0, hit 0 or 1, 0 <= hits <= attempts, attempts
 * >= 1, weight >= 0, no missing value). A problem is an issue naming the
 * file, the row (Parquet: the row's number in its file, from 1) and the
 * column.
 */
import { createReadStream } from 'node:fs';
import { createHash } from 'node:crypto';
import { basename } from 'node:path';
import { type Issue, type Result, error, fail, ok, show } from '../issues.js';
import { parseDecimal } from '../formats/plain-decimal.js';
import { mergeGroups } from '../model/collapse.js';
import type { GroupedTrials } from '../model/collapsed-trials.js';
import { COLLAPSE_BATCH_ROWS, GroupAccumulator } from '../model/group-accumulator.js';
import { groupingSql } from './grouping-sql.js';
import type { DuckDBConnection } from '@duckdb/node-api';
import { type DuckDbLoader, loadDuckDb } from './load-duckdb.js';

type Connection = DuckDBConnection;

/** Options of {@link readGroupedWithDuckDb}. */
export interface EngineReadOptions {
  /** Latency resolution of the grouping, ms. */
  readonly latencyStepMs: number;
  /** Called with the stage (`checking 12 files`, `grouping`, `read 120,000 groups`) as it changes and about every quarter second. */
  readonly onProgress?: (stage: string) => void;
  /** How DuckDB is imported (tests simulate its absence). */
  readonly loader?: DuckDbLoader;
  /** DuckDB's memory limit (e.g. `1GB`); default DuckDB's own (80% of RAM). */
  readonly memoryLimit?: string;
}

/** What the engine read: the groups, the files behind them, their digest and the rows they held. */
export interface EngineRead {
  readonly grouped: GroupedTrials;
  readonly files: readonly string[];
  /** SHA-256 of the files' bytes, one after another in the order of `files`. */
  readonly sha256: string;
  readonly rows: number;
}

const NUMERIC = /^(TINYINT|SMALLINT|INTEGER|BIGINT|HUGEINT|UTINYINT|USMALLINT|UINTEGER|UBIGINT|UHUGEINT|FLOAT|DOUBLE|DECIMAL\(\d+,\s*\d+\))$/;

type ColumnKind = 'number' | 'text' | 'boolean' | 'other';

function kindOf(type: string): ColumnKind {
  if (NUMERIC.test(type)) return 'number';
  if (type === 'VARCHAR') return 'text';
  if (type === 'BOOLEAN') return 'boolean';
  return 'other';
}

/** A path as an SQL string literal. */
function quote(text: string): string {
  return `'${text.replaceAll("'", "''")}'`;
}

/** The scan of one file or a list of them, by the files' extension. */
function scan(files: readonly string[], parquet: boolean, extra: string): string {
  const list = `[${files.map(quote).join(', ')}]`;
  return parquet ? `read_parquet(${list}${extra})` : `read_csv(${list}, header = true${extra})`;
}

interface Layout {
  readonly parquet: boolean;
  readonly shape: 'per_attempt' | 'per_round';
  readonly player: boolean;
  readonly weight: boolean;
  readonly difficultyIsText: boolean;
}

const REQUIRED = ['latency_ms', 'scale', 'difficulty'] as const;

/** Check one file's columns; the layout it implies, or the issues. */
function checkColumns(file: string, columns: ReadonlyMap<string, string>): { layout: Omit<Layout, 'parquet'> | null; issues: Issue[] } {
  const issues: Issue[] = [];
  const name = basename(file);
  const shape = columns.has('hit') ? 'per_attempt' : 'per_round';
  const counts = shape === 'per_attempt' ? ['hit'] : ['hits', 'attempts'];
  for (const column of [...REQUIRED, ...counts]) {
    const type = columns.get(column);
    if (type === undefined) {
      const what = column === 'hits' || column === 'attempts' ? 'a `hit` column, or `hits` and `attempts` columns' : `a \`${column}\` column`;
      issues.push(error('missing_column', `${name}:${column}`, `a trials file requires ${what}, got columns ${[...columns.keys()].map((key) => `\`${key}\``).join(', ')}`));
      continue;
    }
    const kind = kindOf(type);
    const allowed = column === 'difficulty' ? kind === 'number' || kind === 'text' : column === 'hit' ? kind === 'number' || kind === 'boolean' : kind === 'number';
    if (!allowed) {
      const expected = column === 'difficulty' ? 'a numeric or text column' : column === 'hit' ? 'a numeric or boolean column' : 'a numeric column';
      issues.push(error('wrong_type', `${name}:${column}`, `\`${column}\` requires ${expected}, got ${type}`));
    }
  }
  const weightType = columns.get('weight');
  if (weightType !== undefined && kindOf(weightType) !== 'number') issues.push(error('wrong_type', `${name}:weight`, `\`weight\` requires a numeric column, got ${weightType}`));
  if (issues.length > 0) return { layout: null, issues };
  return {
    layout: { shape, player: columns.has('player'), weight: weightType !== undefined, difficultyIsText: kindOf(columns.get('difficulty') as string) === 'text' },
    issues,
  };
}

/** The view the grouping statement reads: the format's columns as DuckDB types the statement expects, with each row's file and number. */
function viewSql(files: readonly string[], layout: Layout): string {
  const columns = [
    ...(layout.player ? ['CAST(player AS VARCHAR) AS player'] : []),
    'CAST(latency_ms AS DOUBLE) AS latency_ms',
    'CAST(scale AS DOUBLE) AS scale',
    `CAST(difficulty AS ${layout.difficultyIsText ? 'VARCHAR' : 'DOUBLE'}) AS difficulty`,
    ...(layout.shape === 'per_attempt' ? ['CAST(hit AS DOUBLE) AS hit'] : ['CAST(hits AS DOUBLE) AS hits', 'CAST(attempts AS DOUBLE) AS attempts']),
    ...(layout.weight ? ['CAST(weight AS DOUBLE) AS weight'] : []),
    'filename AS source_file',
    layout.parquet ? 'file_row_number + 1 AS source_row' : 'NULL AS source_row',
  ];
  const extra = layout.parquet ? ', filename = true, file_row_number = true, union_by_name = true' : ', filename = true, union_by_name = true';
  return `CREATE VIEW telemetry AS SELECT ${columns.join(', ')} FROM ${scan(files, layout.parquet, extra)}`;
}

/** The first row breaking the format's value rules: its file, row, column and value; one scan, stopping at the first. */
function firstBadRowSql(layout: Layout): string {
  const finite = (column: string) => `(${column} IS NULL OR isnan(${column}) OR isinf(${column}))`;
  const checks: [string, string, string][] = [
    ['latency_ms', `${finite('latency_ms')} OR latency_ms < 0 OR latency_ms > 60000`, 'a number from 0 to 60000'],
    ['scale', `${finite('scale')} OR scale <= 0`, 'a number above 0'],
    ['difficulty', layout.difficultyIsText ? "difficulty IS NULL OR trim(difficulty) = ''" : finite('difficulty'), 'a value (a number or a level name)'],
    ...(layout.shape === 'per_attempt'
      ? ([['hit', 'hit IS NULL OR hit NOT IN (0, 1)', '0 or 1']] as [string, string, string][])
      : ([
          ['attempts', `${finite('attempts')} OR attempts < 1 OR attempts <> floor(attempts)`, 'a whole number >= 1'],
          ['hits', `${finite('hits')} OR hits < 0 OR hits <> floor(hits) OR hits > attempts`, 'a whole number from 0 to `attempts`'],
        ] as [string, string, string][])),
    ...(layout.weight ? ([['weight', `${finite('weight')} OR weight < 0`, 'a number >= 0']] as [string, string, string][]) : []),
    ...(layout.player ? ([['player', "player IS NULL OR player = ''", 'a player id']] as [string, string, string][]) : []),
  ];
  const which = `CASE ${checks.map(([column, bad]) => `WHEN ${bad} THEN '${column}'`).join(' ')} END`;
  const values = `CASE ${checks.map(([column, bad]) => `WHEN ${bad} THEN CAST(${column} AS VARCHAR)`).join(' ')} END`;
  const expected = `CASE ${checks.map(([, bad, text]) => `WHEN ${bad} THEN '${text.replaceAll("'", "''")}'`).join(' ')} END`;
  return `SELECT source_file, source_row, ${which} AS bad_column, ${values} AS bad_value, ${expected} AS expected FROM telemetry WHERE ${checks.map(([, bad]) => `(${bad})`).join(' OR ')} LIMIT 1`;
}

/** SHA-256 of the files' bytes in order (streamed, 1 MiB at a time). */
async function digestFiles(files: readonly string[]): Promise<string> {
  const hash = createHash('sha256');
  for (const file of files) {
    for await (const chunk of createReadStream(file, { highWaterMark: 1 << 20 })) hash.update(chunk as Buffer);
  }
  return hash.digest('hex');
}

/** Run a query while a timer reports the stage about every quarter second. */
async function withTicks<T>(stage: string, onProgress: ((stage: string) => void) | undefined, work: () => Promise<T>): Promise<T> {
  onProgress?.(stage);
  const timer = onProgress === undefined ? null : setInterval(() => onProgress(stage), 250);
  try {
    return await work();
  } finally {
    if (timer !== null) clearInterval(timer);
  }
}

async function listFiles(connection: Connection, pattern: string): Promise<string[]> {
  const listed = await connection.runAndReadAll(`SELECT file FROM glob(${quote(pattern)}) ORDER BY file`);
  return listed.getRows().map((row) => String(row[0]));
}

/**
 * Read trials from a Parquet file, or from every file a glob matches (CSV or
 * Parquet shards, one kind), grouped at `latencyStepMs` by the grouping
 * statement, into the groups a fit takes.
 */
export async function readGroupedWithDuckDb(pattern: string, options: EngineReadOptions): Promise<Result<EngineRead>> {
  const loaded = await loadDuckDb(pattern, options.loader);
  if (!loaded.ok) return loaded;
  const { DuckDBInstance } = loaded.value;
  const instance = await DuckDBInstance.create(':memory:', options.memoryLimit === undefined ? {} : { memory_limit: options.memoryLimit });
  const connection = await instance.connect();
  try {
    return await readThrough(connection, pattern, options);
  } catch (cause) {
    // A file DuckDB cannot decode part-way (a truncated shard, a type it cannot cast): its first line, not a stack trace.
    return fail([error('cannot_read', pattern, `the files require to be readable by DuckDB: ${(cause as Error).message.split('\n')[0] ?? ''}`)]);
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

async function readThrough(connection: Connection, pattern: string, options: EngineReadOptions): Promise<Result<EngineRead>> {
  const label = basename(pattern);
  let files: string[];
  try {
    files = await listFiles(connection, pattern);
  } catch (cause) {
    return fail([error('cannot_read', pattern, `the files require to be listable: ${(cause as Error).message}`)]);
  }
  if (files.length === 0) return fail([error('no_files', pattern, `\`${pattern}\` requires at least one matching file, got none`)]);
  const parquetFiles = files.filter((file) => /\.parquet$/i.test(file)).length;
  if (parquetFiles !== 0 && parquetFiles !== files.length) {
    return fail([error('mixed_files', pattern, `\`${pattern}\` requires files of one kind (all Parquet or all CSV), got ${parquetFiles} Parquet and ${files.length - parquetFiles} other`)]);
  }
  const parquet = parquetFiles > 0;
  // The columns of every file, checked one by one so that an issue names its file.
  let layout: Layout | null = null;
  const issues: Issue[] = [];
  await withTicks(`checking ${files.length} file(s)`, options.onProgress, async () => {
    for (const file of files) {
      let columns: Map<string, string>;
      try {
        const described = await connection.runAndReadAll(`DESCRIBE SELECT * FROM ${scan([file], parquet, '')}`);
        columns = new Map(described.getRows().map((row) => [String(row[0]), String(row[1])]));
      } catch (cause) {
        issues.push(error('cannot_read', basename(file), `the file requires to be a readable ${parquet ? 'Parquet' : 'CSV'} file: ${(cause as Error).message.split('\n')[0] ?? ''}`));
        break;
      }
      const checked = checkColumns(file, columns);
      issues.push(...checked.issues);
      if (checked.layout === null) break;
      const next: Layout = { ...checked.layout, parquet };
      if (layout !== null && (layout.shape !== next.shape || layout.player !== next.player || layout.weight !== next.weight)) {
        const describe = (of: Layout) => `${of.shape === 'per_attempt' ? '`hit`' : '`hits`/`attempts`'}${of.player ? ', `player`' : ''}${of.weight ? ', `weight`' : ''}`;
        issues.push(error('columns_differ', basename(file), `every file of \`${pattern}\` requires the columns of the first (${describe(layout)}), got ${describe(next)}`));
        break;
      }
      // Text in any file makes the difficulty text (DuckDB unites the files' types so).
      layout = layout === null ? next : { ...layout, difficultyIsText: layout.difficultyIsText || next.difficultyIsText };
    }
  });
  if (issues.length > 0 || layout === null) return fail(issues);
  const chosen: Layout = layout;
  await connection.run(viewSql(files, chosen));

  const bad = await withTicks('checking values', options.onProgress, () => connection.runAndReadAll(firstBadRowSql(chosen)));
  const badRow = bad.getRows()[0];
  if (badRow !== undefined) {
    const [file, row, column, value, expected] = badRow.map((cell) => (cell === null ? null : String(cell)));
    const where = row === null ? `${basename(file ?? label)}:${column ?? ''}` : `${basename(file ?? label)}:${row}:${column ?? ''}`;
    return fail([error(value === null ? 'missing_value' : 'invalid_value', where, `\`${column ?? ''}\` requires ${expected ?? 'a valid value'}, got ${value === null ? 'an empty value' : show(value)}`)]);
  }

  // Named levels in the order they first appear (file by file, row by row), as the CSV reader meets them: the first is the default reference.
  const levels = new Map<string, number>();
  if (chosen.difficultyIsText) {
    const firstSeen = await withTicks('finding the difficulty levels', options.onProgress, () =>
      // CSV scans have no row number: DuckDB keeps the files' order (preserve_insertion_order), which row_number() counts.
      connection.runAndReadAll(
        `SELECT level FROM (SELECT trim(difficulty) AS level, source_file, ${chosen.parquet ? 'source_row' : 'row_number() OVER ()'} AS n FROM telemetry) AS seen GROUP BY level ORDER BY min({'file': source_file, 'row': n}), level`,
      ),
    );
    for (const [level] of firstSeen.getRows()) levels.set(String(level), levels.size);
  }

  const digest = digestFiles(files);
  const statement = groupingSql({ table: 'telemetry', latencyStepMs: options.latencyStepMs, shape: chosen.shape, player: chosen.player, weight: chosen.weight });
  const accumulator = new GroupAccumulator({ weight: chosen.weight, player: chosen.player, merge: chosen.shape === 'per_attempt', expectedRows: 1 << 16 });
  const players = new Map<string, number>();
  let rows = 0;
  let groupsRead = 0;
  const result = await withTicks('grouping', options.onProgress, () => connection.stream(statement));
  const batch = {
    latency: new Float64Array(COLLAPSE_BATCH_ROWS),
    scale: new Float64Array(COLLAPSE_BATCH_ROWS),
    difficulty: new Float64Array(COLLAPSE_BATCH_ROWS),
    weight: chosen.weight ? new Float64Array(COLLAPSE_BATCH_ROWS) : null,
    player: chosen.player ? new Int32Array(COLLAPSE_BATCH_ROWS) : null,
    successes: new Float64Array(COLLAPSE_BATCH_ROWS),
    attempts: new Float64Array(COLLAPSE_BATCH_ROWS),
  };
  let filled = 0;
  const flush = () => {
    if (filled === 0) return;
    accumulator.addRows(batch, filled);
    filled = 0;
  };
  // Result columns: [player,] latency_ms, scale, difficulty, [weight,] hits, attempts.
  const at = chosen.player ? 1 : 0;
  const weightAt = chosen.weight ? at + 3 : -1;
  const hitsAt = at + 3 + (chosen.weight ? 1 : 0);
  for (;;) {
    const chunk = await result.fetchChunk();
    if (chunk === null || chunk.rowCount === 0) break;
    const count = chunk.rowCount;
    const playerVector = chosen.player ? chunk.getColumnVector(0) : null;
    const latencyVector = chunk.getColumnVector(at);
    const scaleVector = chunk.getColumnVector(at + 1);
    const difficultyVector = chunk.getColumnVector(at + 2);
    const weightVector = weightAt < 0 ? null : chunk.getColumnVector(weightAt);
    const hitsVector = chunk.getColumnVector(hitsAt);
    const attemptsVector = chunk.getColumnVector(hitsAt + 1);
    for (let i = 0; i < count; i += 1) {
      if (filled === COLLAPSE_BATCH_ROWS) flush();
      if (playerVector !== null && batch.player !== null) {
        const id = String(playerVector.getItem(i));
        let code = players.get(id);
        if (code === undefined) {
          code = players.size;
          players.set(id, code);
        }
        batch.player[filled] = code;
      }
      batch.latency[filled] = Number(latencyVector.getItem(i));
      batch.scale[filled] = Number(scaleVector.getItem(i));
      if (chosen.difficultyIsText) {
        const level = String(difficultyVector.getItem(i)).trim();
        let code = levels.get(level);
        if (code === undefined) {
          code = levels.size;
          levels.set(level, code);
        }
        batch.difficulty[filled] = code;
      } else batch.difficulty[filled] = Number(difficultyVector.getItem(i));
      if (weightVector !== null && batch.weight !== null) batch.weight[filled] = Number(weightVector.getItem(i));
      const attempts = Number(attemptsVector.getItem(i));
      batch.successes[filled] = Number(hitsVector.getItem(i));
      batch.attempts[filled] = attempts;
      rows += chosen.shape === 'per_attempt' ? attempts : 1;
      filled += 1;
    }
    groupsRead += count;
    // About every 65,536 groups (32 chunks of DuckDB's 2,048 rows), not every chunk.
    if ((groupsRead & 0xffff) < count) options.onProgress?.(`read ${groupsRead.toLocaleString('en-GB')} groups of ${rows.toLocaleString('en-GB')} rows`);
  }
  flush();

  const levelNames = [...levels.keys()];
  const numericLevels = chosen.difficultyIsText && levelNames.every((level) => parseDecimal(level) !== undefined) ? levelNames.map((level) => parseDecimal(level) as number) : null;
  let groups = accumulator.finish(numericLevels === null ? undefined : (code) => numericLevels[code] as number);
  if (numericLevels !== null && new Set(numericLevels).size < numericLevels.length) groups = mergeGroups(groups);
  if (groups.rows === 0) return fail([error('empty_file', pattern, `\`${pattern}\` requires rows, got none in ${files.length} file(s)`)]);
  const difficulty = chosen.difficultyIsText && numericLevels === null ? { kind: 'levels' as const, levels: levelNames } : { kind: 'numeric' as const };
  return ok(
    {
      grouped: {
        file: label,
        shape: chosen.shape,
        difficulty,
        players: chosen.player ? [...players.keys()] : null,
        groups: { ...groups, sourceRows: rows },
      },
      files,
      sha256: await digest,
      rows,
    },
  );
}
