/**
 * `npm run bench:limits`: every lobby command at the documented limits
 * (docs/formats.md), whole process, wall time and peak memory (issue 15: a
 * few seconds and at most 2 GiB each).
 *
 * Inputs, generated (seeded) into a temporary folder: lobbies of 256 players
 * x 64 samples (16,384 latency values, the lobby-wide limit), 256 players with
 * one latency each, and 4 players x 4,096 samples; a server-choice lobby of
 * 256 players on 64 servers; a JSON file just under 16 MiB. Rules: the demo
 * league's (p10 estimator, soft cap), pooled samples with no coupling, and
 * pooled samples with a ratio limit, a budget, a step and a latency limit
 * (the audit's most expensive case: its exploit view solves the whole lobby
 * twice per player). Uses /usr/bin/time for the peak resident memory.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { createRandomSource } from '../../src/random.js';

const root = join(import.meta.dirname, '..', '..');
const folder = mkdtempSync(join(tmpdir(), 'lagparity-limits-'));
const random = createRandomSource(15);
const latency = () => Math.round((10 + 200 * random()) * 10) / 10;

function lobby(players: number, samples: number): string {
  const path = join(folder, `lobby-${players}x${samples}.json`);
  const document = {
    format: 'lagparity/lobby@1',
    match_id: `limits-${players}x${samples}`,
    attribute: 'hit_area',
    difficulty: 'veteran',
    players: Array.from({ length: players }, (_, index) => ({ id: `p${index}`, team: `t${index % 2}`, latency_ms: samples === 1 ? latency() : Array.from({ length: samples }, latency) })),
  };
  writeFileSync(path, JSON.stringify(document));
  return path;
}

function rules(name: string, fields: Record<string, unknown>): string {
  const path = join(folder, `${name}.rules.json`);
  writeFileSync(path, JSON.stringify({ format: 'lagparity/rules@1', ...fields }));
  return path;
}

const servers = Array.from({ length: 64 }, (_, index) => `server-${index}`);
const serverLobby = join(folder, 'servers-256x64.json');
writeFileSync(
  serverLobby,
  JSON.stringify({
    format: 'lagparity/lobby-servers@1',
    match_id: 'limits-servers',
    attribute: 'hit_area',
    difficulty: 'veteran',
    servers,
    players: Array.from({ length: 256 }, (_, index) => ({ id: `p${index}`, team: `t${index % 2}`, latency_ms: Object.fromEntries(servers.map((server) => [server, latency()])) })),
  }),
);
const huge = join(folder, 'huge.json');
writeFileSync(huge, `{"format": "lagparity/lobby@1", "pad": "${'x'.repeat(16 * 1024 * 1024 - 64)}"}`);

const model = join(root, 'matches', 'model.json');
const ruleSets = {
  league: join(root, 'matches', 'league-rules.json'),
  pooled: rules('pooled', { latency_estimator: 'all_samples', scale_cap: 1.5 }),
  coupled: rules('coupled', { latency_estimator: 'all_samples', scale_cap: 1.5, max_scale_ratio: 1.4, assistance_budget: 100, quantisation_step: 0.05, latency_limit_ms: 200 }),
};
const lobbies = [lobby(256, 64), lobby(256, 1), lobby(4, 4096)];

const runs: { name: string; args: string[] }[] = [];
for (const path of lobbies) {
  runs.push({ name: `validate ${path.split('/').pop()}`, args: ['validate', path] });
  for (const [name, rulesPath] of Object.entries(ruleSets)) {
    runs.push({ name: `balance ${path.split('/').pop()} (${name})`, args: ['balance', path, '--model', model, '--rules', rulesPath, '--json'] });
    runs.push({ name: `audit ${path.split('/').pop()} (${name})`, args: ['audit', path, '--model', model, '--rules', rulesPath, '--json'] });
  }
}
runs.push({ name: 'audit --sweep scale_cap (5 values), 256x64 (coupled)', args: ['audit', lobbies[0] as string, '--model', model, '--rules', ruleSets.coupled, '--sweep', 'scale_cap=1.6:2.0:0.1'] });
runs.push({ name: 'choose-server 256 players x 64 servers (league)', args: ['choose-server', serverLobby, '--model', model, '--rules', ruleSets.league, '--json'] });
runs.push({ name: 'validate a 16 MiB JSON file', args: ['validate', huge] });
runs.push({ name: 'report, trials + 256x64 lobby (league)', args: ['report', '--trials', join(root, 'matches', 'playtest-trials.csv'), '--model', model, '--lobbies', lobbies[0] as string, '--rules', ruleSets.league, '--out', join(folder, `report-${Date.now()}.html`)] });

const lines = [`every lobby command at the documented limits (256 players, 4,096 samples a player, 16,384 values a lobby, 16 MiB a file); load average ${loadavg()[0]?.toFixed(2)} on 2 cores`];
let worst = 0;
for (const run of runs) {
  const result = spawnSync('/usr/bin/time', ['-f', '%e %M', process.execPath, join(root, 'dist', 'bin', 'lagparity.js'), ...run.args], { encoding: 'utf8', maxBuffer: 256 * 1024 * 1024 });
  const [seconds, kilobytes] = (result.stderr.trim().split('\n').at(-1) ?? '').split(' ').map(Number);
  worst = Math.max(worst, seconds ?? 0);
  lines.push(`  ${run.name.padEnd(52)} exit ${String(result.status)}  ${(seconds ?? Number.NaN).toFixed(2).padStart(6)} s  ${(((kilobytes ?? 0) / 1024) | 0).toString().padStart(5)} MiB`);
}
lines.push(`  slowest: ${worst.toFixed(2)} s (goal: a few seconds; 2 GiB at most)`);
process.stdout.write(`${lines.join('\n')}\n`);
