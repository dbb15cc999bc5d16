/**
 * `npm run integration:engines`: the grouping statement of `lagparity
 * grouping-sql` run on DuckDB (embedded), PostgreSQL and ClickHouse, which
 * must return identical counts, and the same counts as a grouping computed
 * here in JavaScript from the statement's definition (`roundLatency`). Not
 * part of CI: it starts database servers.
 *
 * A generated table (seeded; 200,000 per-attempt rows of 300 players,
 * latencies on a 0.001 ms grid with many exactly half-way values, three
 * scales and three named levels) is loaded into each engine, and the
 * statement is run at three resolutions: 1 ms, 0.01 ms and 0.25 ms.
 *
 * - PostgreSQL: initdb into a temporary folder, a server on a Unix socket in
 *   that folder (no TCP), run as the `postgres` user when this script runs as
 *   root (PostgreSQL refuses root), stopped and removed at the end. Found
 *   under /usr/lib/postgresql/<version>/bin or on PATH. Install: `apt-get
 *   install -y postgresql`.
 * - ClickHouse: a server with a minimal configuration in a temporary folder
 *   (127.0.0.1, a free port), stopped and removed at the end. Needs
 *   `clickhouse-server` and `clickhouse-client` (or the one `clickhouse`
 *   binary). Install: `apt-get install -y clickhouse-server clickhouse-client`.
 * An engine that is not installed is skipped with that message; the script
 * fails (exit 1) if any engine that ran disagrees.
 *
 * Usage: npm run integration:engines [-- --rows 200000]
 */
import { type ChildProcess, spawn, spawnSync } from 'node:child_process';
import { chmodSync, chownSync, existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir, userInfo } from 'node:os';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import { groupingSql, roundLatency } from '../../src/engine/grouping-sql.js';
import { createRandomSource } from '../../src/random.js';

const args = process.argv.slice(2);
const rowsArgument = args[args.indexOf('--rows') + 1];
const ROWS = args.includes('--rows') && rowsArgument !== undefined ? Number(rowsArgument) : 200_000;
const STEPS = [1, 0.01, 0.25];
const LEVELS = ['standard', 'veteran', 'elite'];
const SCALES = [1, 1.25, 1.5];

interface Row {
  readonly player: string;
  readonly latency: number;
  readonly scale: number;
  readonly difficulty: string;
  readonly hit: number;
}

function generate(): Row[] {
  const random = createRandomSource(20261205);
  const base = Array.from({ length: 300 }, () => 5 + 200 * random());
  return Array.from({ length: ROWS }, () => {
    const who = Math.floor(random() * base.length);
    // A third of the latencies sit exactly half-way between two steps of 0.01 ms (x.xx5), where rounding rules differ.
    const fine = Math.round(((base[who] as number) + 20 * random()) * 1000) / 1000;
    const latency = random() < 1 / 3 ? Math.floor(fine * 100) / 100 + 0.005 : fine;
    const scale = SCALES[Math.floor(random() * SCALES.length)] as number;
    const level = Math.floor(random() * LEVELS.length);
    const hit = random() < 1 / (1 + Math.exp(-(0.9 - 0.008 * latency + 1.6 * Math.log(scale) - 0.5 * level))) ? 1 : 0;
    return { player: `p${String(who).padStart(3, '0')}`, latency: Number(latency.toFixed(3)), scale, difficulty: LEVELS[level] as string, hit };
  });
}

/** One result row as text, numbers through Number() so that `1.00` and `1` agree. */
function canonical(cells: readonly unknown[]): string {
  const [player, latency, scale, difficulty, hits, attempts] = cells;
  return [String(player), String(Number(latency)), String(Number(scale)), String(difficulty), String(Number(hits)), String(Number(attempts))].join(',');
}

function sortedLines(lines: string[]): string[] {
  return lines.sort();
}

/** The counts by the statement's definition, computed here. */
function reference(rows: readonly Row[], step: number): string[] {
  const groups = new Map<string, { hits: number; attempts: number }>();
  for (const row of rows) {
    const key = [row.player, String(roundLatency(row.latency, step)), String(row.scale), row.difficulty].join(',');
    const group = groups.get(key) ?? { hits: 0, attempts: 0 };
    group.hits += row.hit;
    group.attempts += 1;
    groups.set(key, group);
  }
  return sortedLines([...groups].map(([key, group]) => `${key},${group.hits},${group.attempts}`));
}

function parseCsv(text: string): string[] {
  const lines = text.trim().split('\n').slice(1);
  return sortedLines(lines.map((line) => canonical(line.split(',').map((cell) => cell.replace(/^"|"$/g, '')))));
}

async function runDuckDb(csv: string): Promise<Map<number, string[]>> {
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  const out = new Map<number, string[]>();
  try {
    await connection.run(`CREATE TABLE telemetry AS SELECT * FROM read_csv('${csv}', header = true, columns = {'player': 'VARCHAR', 'latency_ms': 'DOUBLE', 'scale': 'DOUBLE', 'difficulty': 'VARCHAR', 'hit': 'INTEGER'})`);
    for (const step of STEPS) {
      const result = await connection.runAndReadAll(groupingSql({ latencyStepMs: step }));
      out.set(step, sortedLines(result.getRows().map(canonical)));
    }
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
  return out;
}

function which(command: string): string | null {
  const found = spawnSync('sh', ['-c', `command -v ${command}`], { encoding: 'utf8' });
  return found.status === 0 ? found.stdout.trim() : null;
}

function run(command: string, commandArgs: readonly string[], options: { asUser?: string | null; input?: string } = {}): { status: number | null; stdout: string; stderr: string } {
  const [file, fileArgs] = options.asUser ? ['runuser', ['-u', options.asUser, '--', command, ...commandArgs]] : [command, commandArgs];
  const result = spawnSync(file, fileArgs as string[], { encoding: 'utf8', input: options.input ?? '', maxBuffer: 1 << 28 });
  return { status: result.status, stdout: result.stdout ?? '', stderr: result.stderr ?? '' };
}

function postgresBin(): string | null {
  const root = '/usr/lib/postgresql';
  if (existsSync(root)) {
    const versions = readdirSync(root).filter((name) => existsSync(join(root, name, 'bin', 'initdb'))).sort((a, b) => Number(b) - Number(a));
    if (versions[0] !== undefined) return join(root, versions[0], 'bin');
  }
  const initdb = which('initdb');
  return initdb === null ? null : initdb.slice(0, initdb.lastIndexOf('/'));
}

async function runPostgres(csv: string, folder: string): Promise<Map<number, string[]> | string> {
  const bin = postgresBin();
  if (bin === null) return 'PostgreSQL is not installed: `apt-get install -y postgresql` (Debian), then run this again';
  const asUser = process.getuid?.() === 0 ? 'postgres' : null;
  const home = join(folder, 'pg');
  mkdirSync(home);
  if (asUser !== null) {
    const info = run('id', ['-u', asUser]);
    const group = run('id', ['-g', asUser]);
    if (info.status !== 0) return 'PostgreSQL refuses to run as root and there is no `postgres` user: run this as another user';
    chownSync(home, Number(info.stdout), Number(group.stdout));
  }
  const data = join(home, 'data');
  const port = String(20000 + Math.floor(Math.random() * 9000));
  const initdb = run(join(bin, 'initdb'), ['-D', data, '-A', 'trust', '-U', 'lagparity', '--no-sync'], { asUser });
  if (initdb.status !== 0) return `initdb failed: ${initdb.stderr}`;
  const start = run(join(bin, 'pg_ctl'), ['-D', data, '-l', join(home, 'log.txt'), '-w', '-o', `-k ${home} -p ${port} -c listen_addresses=''`, 'start'], { asUser });
  if (start.status !== 0) return `pg_ctl start failed: ${start.stderr}${start.stdout}`;
  try {
    const psql = (sql: string, csvOut = false) => run(join(bin, 'psql'), ['-X', '-q', '-v', 'ON_ERROR_STOP=1', '-h', home, '-p', port, '-U', 'lagparity', '-d', 'postgres', ...(csvOut ? ['--csv'] : []), '-c', sql], { asUser });
    const created = psql('CREATE TABLE telemetry (player text, latency_ms double precision, scale double precision, difficulty text, hit integer)');
    if (created.status !== 0) return `psql failed: ${created.stderr}`;
    const loaded = psql(`\\copy telemetry FROM '${csv}' CSV HEADER`);
    if (loaded.status !== 0) return `\\copy failed: ${loaded.stderr}`;
    const out = new Map<number, string[]>();
    for (const step of STEPS) {
      const result = psql(groupingSql({ latencyStepMs: step }), true);
      if (result.status !== 0) return `the statement failed on PostgreSQL: ${result.stderr}`;
      out.set(step, parseCsv(result.stdout));
    }
    const version = psql('SHOW server_version', true);
    process.stdout.write(`PostgreSQL ${version.stdout.trim().split('\n')[1] ?? '?'} (${bin})\n`);
    return out;
  } finally {
    run(join(bin, 'pg_ctl'), ['-D', data, '-m', 'fast', '-w', 'stop'], { asUser });
  }
}

async function waitFor(check: () => boolean, seconds: number): Promise<boolean> {
  const until = Date.now() + seconds * 1000;
  while (Date.now() < until) {
    if (check()) return true;
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
  return false;
}

async function runClickHouse(csv: string, folder: string): Promise<Map<number, string[]> | string> {
  const single = which('clickhouse');
  const server = which('clickhouse-server') ?? (single === null ? null : `${single} server`);
  const client = which('clickhouse-client') ?? (single === null ? null : `${single} client`);
  if (server === null || client === null) return 'ClickHouse is not installed: `apt-get install -y clickhouse-server clickhouse-client` (Debian), then run this again';
  const home = join(folder, 'ch');
  for (const sub of ['data', 'tmp', 'user_files', 'log']) mkdirSync(join(home, sub), { recursive: true });
  const port = String(30000 + Math.floor(Math.random() * 9000));
  writeFileSync(
    join(home, 'users.xml'),
    '<yandex><profiles><default/></profiles><users><default><password></password><networks><ip>127.0.0.1</ip></networks><profile>default</profile><quota>default</quota></default></users><quotas><default/></quotas></yandex>\n',
  );
  writeFileSync(
    join(home, 'config.xml'),
    `<yandex><logger><level>warning</level><log>${home}/log/server.log</log><errorlog>${home}/log/err.log</errorlog></logger>` +
      `<tcp_port>${port}</tcp_port><listen_host>127.0.0.1</listen_host><path>${home}/data/</path><tmp_path>${home}/tmp/</tmp_path>` +
      `<user_files_path>${home}/user_files/</user_files_path><users_config>${home}/users.xml</users_config>` +
      '<default_profile>default</default_profile><default_database>default</default_database><mark_cache_size>536870912</mark_cache_size></yandex>\n',
  );
  const [serverFile, ...serverArgs] = server.split(' ') as [string, ...string[]];
  const [clientFile, ...clientArgs] = client.split(' ') as [string, ...string[]];
  const child: ChildProcess = spawn(serverFile, [...serverArgs, `--config-file=${join(home, 'config.xml')}`], { stdio: 'ignore' });
  const query = (sql: string, input?: string) => run(clientFile, [...clientArgs, '--port', port, '--format', 'CSVWithNames', '-q', sql], input === undefined ? {} : { input });
  try {
    if (!(await waitFor(() => query('SELECT 1').status === 0, 30))) return `the ClickHouse server did not start (log: ${home}/log)`;
    const version = query('SELECT version()').stdout.trim().split('\n')[1] ?? '?';
    process.stdout.write(`ClickHouse ${version.replace(/"/g, '')}\n`);
    const created = query('CREATE TABLE telemetry (player String, latency_ms Float64, scale Float64, difficulty String, hit UInt8) ENGINE = Memory');
    if (created.status !== 0) return `CREATE TABLE failed: ${created.stderr.split('\n')[0] ?? ''}`;
    const text = (await import('node:fs')).readFileSync(csv, 'utf8');
    const loaded = query('INSERT INTO telemetry FORMAT CSVWithNames', text);
    if (loaded.status !== 0) return `INSERT failed: ${loaded.stderr.split('\n')[0] ?? ''}`;
    const out = new Map<number, string[]>();
    for (const step of STEPS) {
      const result = query(groupingSql({ latencyStepMs: step }).trim().replace(/;$/, ''));
      if (result.status !== 0) return `the statement failed on ClickHouse: ${result.stderr.split('\n')[0] ?? ''}`;
      out.set(step, parseCsv(result.stdout));
    }
    return out;
  } finally {
    child.kill('SIGTERM');
    await waitFor(() => child.exitCode !== null || child.signalCode !== null, 20);
  }
}

function compare(name: string, got: Map<number, string[]>, expected: Map<number, string[]>): boolean {
  let same = true;
  for (const step of STEPS) {
    const a = got.get(step) ?? [];
    const b = expected.get(step) ?? [];
    const differs = a.length !== b.length ? 0 : a.findIndex((line, i) => line !== b[i]);
    if (a.length !== b.length || differs >= 0) {
      same = false;
      process.stdout.write(`  ${name} at ${step} ms: DIFFERS (${a.length} groups against ${b.length}${differs >= 0 ? `; first: ${a[differs]} against ${b[differs]}` : ''})\n`);
    } else process.stdout.write(`  ${name} at ${step} ms: identical (${a.length} groups, ${a.reduce((sum, line) => sum + Number(line.split(',')[5]), 0)} attempts)\n`);
  }
  return same;
}

const folder = mkdtempSync(join(tmpdir(), 'lagparity-engines-'));
chmodSync(folder, 0o755);
let failed = false;
try {
  const rows = generate();
  const csv = join(folder, 'telemetry.csv');
  writeFileSync(csv, `player,latency_ms,scale,difficulty,hit\n${rows.map((row) => `${row.player},${row.latency},${row.scale},${row.difficulty},${row.hit}`).join('\n')}\n`);
  chmodSync(csv, 0o644);
  process.stdout.write(`generated ${ROWS.toLocaleString('en-GB')} rows in ${csv} (run as ${userInfo().username}); the statement at 1 ms:\n\n${groupingSql()}\n`);
  const expected = new Map(STEPS.map((step) => [step, reference(rows, step)] as const));
  process.stdout.write('DuckDB (embedded, @duckdb/node-api)\n');
  failed = !compare('DuckDB', await runDuckDb(csv), expected) || failed;
  for (const [name, runner] of [
    ['PostgreSQL', runPostgres],
    ['ClickHouse', runClickHouse],
  ] as const) {
    const result = await runner(csv, folder);
    if (typeof result === 'string') {
      process.stdout.write(`${name}: skipped: ${result}\n`);
      continue;
    }
    failed = !compare(name, result, expected) || failed;
  }
} finally {
  rmSync(folder, { recursive: true, force: true });
}
process.stdout.write(failed ? '\nFAILED: the engines disagree\n' : '\nevery engine that ran returned identical counts\n');
process.exitCode = failed ? 1 : 0;
