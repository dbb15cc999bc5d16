/**
 * The packed package as a matchmaker's service installs it (issue 16): the
 * tarball of `npm pack` installed into an empty project, offline. It must
 * install one package, weigh at most 12 MB, import as an ES module and load
 * with require(), type-check under moduleResolution node16, nodenext and
 * bundler without @types/node, and say what to install when the report's
 * optional charting packages are missing.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROOT } from '../helpers/demo.js';

const TSC = join(ROOT, 'node_modules', 'typescript', 'bin', 'tsc');
let project = '';

function run(command: string, args: string[], cwd = project): { status: number | null; stdout: string; stderr: string } {
  const result = spawnSync(command, args, { cwd, encoding: 'utf8', env: { ...process.env, npm_config_update_notifier: 'false' } });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

function sizeOf(path: string): number {
  const stat = statSync(path);
  if (!stat.isDirectory()) return stat.size;
  return readdirSync(path).reduce((sum, entry) => sum + sizeOf(join(path, entry)), 0);
}

const CONSUMER = `import { balanceLobby, compileModel, compileRules, safeParseLobby, type BalanceResult } from 'lagparity';
const model = compileModel({});
const rules = compileRules({ format: 'lagparity/rules@1' });
const lobby = safeParseLobby({});
if (model.ok && rules.ok && lobby.ok) {
  const result: BalanceResult = balanceLobby(lobby.value, model.value, rules.value);
  if (result.status !== 'rejected') for (const player of result.players) player.scale.toFixed(2);
}
`;

beforeAll(() => {
  project = mkdtempSync(join(tmpdir(), 'lagparity-consumer-'));
  const packed = run('npm', ['pack', '--ignore-scripts', '--silent', '--pack-destination', project], ROOT);
  expect(packed.status, packed.stderr).toBe(0);
  const tarball = packed.stdout.trim().split('\n').pop() as string;
  writeFileSync(join(project, 'package.json'), JSON.stringify({ name: 'consumer', version: '1.0.0', private: true }));
  const installed = run('npm', ['install', '--no-audit', '--no-fund', '--ignore-scripts', '--offline', `./${tarball}`]);
  expect(installed.status, installed.stderr).toBe(0);
  writeFileSync(join(project, 'use.mts'), CONSUMER);
  writeFileSync(join(project, 'use.cts'), CONSUMER);
  writeFileSync(join(project, 'use.ts'), CONSUMER);
}, 120_000);

afterAll(() => {
  if (project !== '') rmSync(project, { recursive: true, force: true });
});

describe('the packed package, installed into an empty project', () => {
  it('installs one package of at most 12 MB (the charting packages are optional peers)', () => {
    const installed = readdirSync(join(project, 'node_modules')).filter((entry) => !entry.startsWith('.'));
    expect(installed).toEqual(['lagparity']);
    expect(sizeOf(join(project, 'node_modules'))).toBeLessThan(12 * 1024 * 1024);
  });

  it('imports as an ES module and loads with require(), with the same API', () => {
    const esm = run(process.execPath, ['--input-type=module', '-e', "import('lagparity').then((l) => process.stdout.write(Object.keys(l).sort().join(',')))"]);
    const cjs = run(process.execPath, ['-e', "process.stdout.write(Object.keys(require('lagparity')).sort().join(','))"]);
    expect(esm.status, esm.stderr).toBe(0);
    expect(cjs.status, cjs.stderr).toBe(0);
    expect(esm.stdout).toContain('balanceLobby');
    expect(cjs.stdout).toBe(esm.stdout);
  });

  it('balances a lobby through require()', () => {
    const script = `const l = require('lagparity');
const model = l.compileModel(require('${join(ROOT, 'matches', 'model.json').replace(/\\/g, '/')}'));
const rules = l.compileRules({ format: 'lagparity/rules@1' });
const lobby = l.parseLobby({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 'veteran', players: [{ id: 'a', latency_ms: 20 }, { id: 'b', latency_ms: 90 }] });
const result = l.balanceLobby(lobby, model.value, rules.value);
process.stdout.write(result.status + ' ' + result.players.map((p) => p.scale.toFixed(3)).join(' '));`;
    const result = run(process.execPath, ['-e', script]);
    expect(result.status, result.stderr).toBe(0);
    expect(result.stdout).toMatch(/^balanced 1\.000 1\.\d{3}$/);
  });

  it('type-checks under moduleResolution node16, nodenext and bundler, ES module and CommonJS files, without @types/node', () => {
    for (const resolution of ['node16', 'nodenext']) {
      writeFileSync(join(project, 'tsconfig.json'), JSON.stringify({ compilerOptions: { strict: true, noEmit: true, types: [], module: resolution, moduleResolution: resolution, skipLibCheck: false }, files: ['use.mts', 'use.cts'] }));
      const checked = run(process.execPath, [TSC, '-p', 'tsconfig.json']);
      expect(checked.stdout + checked.stderr, resolution).toBe('');
    }
    writeFileSync(join(project, 'tsconfig.json'), JSON.stringify({ compilerOptions: { strict: true, noEmit: true, types: [], module: 'esnext', moduleResolution: 'bundler', skipLibCheck: false }, files: ['use.ts'] }));
    const bundler = run(process.execPath, [TSC, '-p', 'tsconfig.json']);
    expect(bundler.stdout + bundler.stderr).toBe('');
  }, 60_000);

  it('names the packages to install when the report is asked for without them', () => {
    const script = "import('lagparity/report').then(async (r) => { const report = await r.renderReport({ trials: {}, model: {}, lobbies: [] }); process.stdout.write(JSON.stringify(report)); })";
    const result = run(process.execPath, ['--input-type=module', '-e', script]);
    expect(result.status, result.stderr).toBe(0);
    const report = JSON.parse(result.stdout) as { ok: boolean; issues: { code: string; message: string }[] };
    expect(report.ok).toBe(false);
    expect(report.issues[0]?.code).toBe('missing_optional_package');
    expect(report.issues[0]?.message).toContain('npm install vega@6.4.0 vega-lite@6.4.3');
  });

  it('names the package to install when a Parquet file is fitted without DuckDB (a real absence: the lean install has none)', () => {
    const result = run(join(project, 'node_modules', '.bin', 'lagparity'), ['fit', 'telemetry/*.parquet']);
    expect(result.status).toBe(2);
    expect(result.stderr).toBe(
      'telemetry/*.parquet: error missing_optional_package: reading Parquet files, globs of shards and grouping at `--latency-step` requires the optional package @duckdb/node-api@1.5.6-r.1, which is not installed: run `npm install @duckdb/node-api@1.5.6-r.1` where lagparity is installed\n',
    );
  });

  it('runs the command line from the bin', () => {
    const result = run(join(project, 'node_modules', '.bin', 'lagparity'), ['--version']);
    expect(result.status, result.stderr).toBe(0);
    expect(result.stdout.trim()).toMatch(/^\d+\.\d+\.\d+$/);
  });
});
