/**
 * `lagparity serve`, end to end: the built CLI listens on a free port and
 * these tests speak HTTP to it (fetch, and raw sockets where a client
 * misbehaves), as a matchmaker in any language would. The answers are checked
 * against what the command line prints for the same inputs, byte for byte.
 */
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { documentText, rankingDocument } from '../../src/formats/result-documents.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES, readJson } from '../helpers/demo.js';
import { type RunningService, post, startService } from '../helpers/service.js';

const modelPath = join(MATCHES, 'model.json');
const rulesPath = join(MATCHES, 'league-rules.json');
const lobbyText = readFileSync(join(MATCHES, 'far-player-5v5.lobby.json'), 'utf8');
const serversText = readFileSync(join(MATCHES, 'cup-final.lobby-servers.json'), 'utf8');
const rulesText = readFileSync(rulesPath, 'utf8');

/** Send raw bytes on one connection and collect the whole answer. */
function rawExchange(url: string, parts: readonly string[], between: () => Promise<void> = async () => {}): Promise<string> {
  const { hostname, port } = new URL(url);
  return new Promise((resolve, reject) => {
    const socket = connect(Number(port), hostname);
    let answer = '';
    socket.setEncoding('utf8').on('data', (chunk: string) => (answer += chunk));
    socket.on('end', () => resolve(answer));
    socket.on('close', () => resolve(answer));
    socket.on('error', reject);
    socket.on('connect', async () => {
      socket.write(parts[0] ?? '');
      await between();
      for (const part of parts.slice(1)) socket.write(part);
    });
  });
}

describe('lagparity serve (a real server on a free port)', () => {
  let service: RunningService;
  beforeAll(async () => {
    service = await startService(['--model', modelPath, '--rules', rulesPath]);
  });
  afterAll(async () => {
    service.kill('SIGTERM');
    expect(await service.exited).toBe(0);
  });

  it('prints one line with http://HOST:PORT on stderr, bound to 127.0.0.1 by default', () => {
    expect(service.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(service.stderr().split('\n').filter((line) => line.includes('http://'))).toHaveLength(1);
  });

  it('POST /v1/balance answers exactly what `lagparity balance --json` prints (rules from --rules, from the body, or the defaults)', async () => {
    const cli = runCli(['balance', '-', '--model', modelPath, '--rules', rulesPath, '--json'], { input: lobbyText });
    const answer = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}}`);
    expect(answer.status).toBe(200);
    expect(answer.text).toBe(cli.stdout);
    const strict = { ...JSON.parse(rulesText), scale_cap: 1.2, soft_cap: null };
    const rulesFile = join(mkdtempSync(join(tmpdir(), 'lagparity-serve-')), 'rules.json');
    writeFileSync(rulesFile, JSON.stringify(strict));
    const withBodyRules = await post(`${service.url}/v1/balance`, JSON.stringify({ lobby: JSON.parse(lobbyText), rules: strict }));
    expect(withBodyRules.text).toBe(runCli(['balance', '-', '--model', modelPath, '--rules', rulesFile, '--json'], { input: lobbyText }).stdout);
    expect(withBodyRules.text).not.toBe(answer.text);
  });

  it('POST /v1/audit answers what `lagparity audit - --json` prints; /v1/server what `choose-server - --json` prints', async () => {
    const audit = await post(`${service.url}/v1/audit`, `{"lobby": ${lobbyText}}`);
    expect(audit.status).toBe(200);
    expect(audit.text).toBe(runCli(['audit', '-', '--model', modelPath, '--rules', rulesPath, '--json'], { input: lobbyText }).stdout);
    const server = await post(`${service.url}/v1/server`, `{"lobby": ${serversText}}`);
    expect(server.status).toBe(200);
    expect(server.text).toBe(runCli(['choose-server', '-', '--model', modelPath, '--rules', rulesPath, '--json'], { input: serversText }).stdout);
  });

  it('POST /v1/rank ranks candidates as rankLobbies does, and refuses an id not in the pool by its place', async () => {
    const pool = JSON.parse(readFileSync(join(MATCHES, 'free-for-all-12.lobby.json'), 'utf8')) as { players: { id: string }[] };
    const ids = pool.players.map((player) => player.id);
    const candidates = [ids.slice(0, 6), ids.slice(6, 12), ids.filter((_, index) => index % 2 === 0)];
    const answer = await post(`${service.url}/v1/rank`, JSON.stringify({ pool, candidates }));
    expect(answer.status).toBe(200);
    const model = compileModel(readJson(modelPath));
    const rules = compileRules(readJson(rulesPath));
    if (!model.ok || !rules.ok) throw new Error('demo');
    expect(answer.text).toBe(documentText(rankingDocument(pool as never, candidates, model.value, rules.value)));
    const unknown = await post(`${service.url}/v1/rank`, JSON.stringify({ pool, candidates: [[ids[0], 'nobody']] }));
    expect(unknown.status).toBe(400);
    expect(JSON.parse(unknown.text)).toEqual({ issues: [{ code: 'unknown_player', path: 'candidates[0][1]', message: expect.stringContaining('"nobody"') }] });
  });

  it('400 with {issues: [{code, path, message}]} for bad JSON, a body that fails validation, or an unknown field', async () => {
    const broken = await post(`${service.url}/v1/balance`, '{"lobby": ');
    expect(broken.status).toBe(400);
    expect(JSON.parse(broken.text).issues[0]).toMatchObject({ code: 'invalid_json', path: 'body:1:11' });
    const lobby = JSON.parse(lobbyText);
    lobby.players[3].latency_ms = -5;
    const invalid = await post(`${service.url}/v1/balance`, JSON.stringify({ lobby }));
    expect(invalid.status).toBe(400);
    expect(JSON.parse(invalid.text)).toEqual({ issues: [{ code: 'out_of_range', path: 'lobby.players[3].latency_ms', message: expect.stringContaining('got -5') }] });
    const extra = await post(`${service.url}/v1/balance`, JSON.stringify({ lobby: JSON.parse(lobbyText), rulez: {} }));
    expect(JSON.parse(extra.text).issues).toEqual([{ code: 'unknown_field', path: 'rulez', message: expect.any(String) }]);
    const badRules = await post(`${service.url}/v1/audit`, JSON.stringify({ lobby: JSON.parse(lobbyText), rules: { format: 'lagparity/rules@1', scale_cap: 'high' } }));
    expect(JSON.parse(badRules.text).issues[0]).toMatchObject({ path: 'rules.scale_cap' });
    const empty = await post(`${service.url}/v1/balance`, '');
    expect(empty.status).toBe(400);
    // A body sent without a content type (curl -d's default is a form type) is still read as JSON.
    const formTyped = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}}`, { 'content-type': 'application/x-www-form-urlencoded' });
    expect(formTyped.status).toBe(200);
  });

  it('404 for an unknown route, 405 with Allow for a wrong method', async () => {
    const missing = await fetch(`${service.url}/v2/balance`);
    expect(missing.status).toBe(404);
    expect(((await missing.json()) as { issues: { code: string }[] }).issues[0]?.code).toBe('not_found');
    const wrong = await fetch(`${service.url}/v1/balance`);
    expect(wrong.status).toBe(405);
    expect(wrong.headers.get('allow')).toBe('POST');
    const wrongGet = await fetch(`${service.url}/metrics`, { method: 'POST', body: '{}' });
    expect(wrongGet.status).toBe(405);
  });

  it('never answers 500 to anything a client sends (300 generated bodies on every POST route)', async () => {
    const lobby = JSON.parse(lobbyText);
    const body = fc.oneof(
      fc.string(),
      fc.json(),
      fc.jsonValue().map((value) => JSON.stringify({ lobby: value })),
      fc.record({ path: fc.constantFrom('format', 'match_id', 'attribute', 'difficulty', 'players'), value: fc.jsonValue() }).map(({ path, value }) => JSON.stringify({ lobby: { ...lobby, [path]: value } })),
      fc.record({ index: fc.nat({ max: 9 }), value: fc.jsonValue() }).map(({ index, value }) => JSON.stringify({ lobby: { ...lobby, players: lobby.players.map((player: object, at: number) => (at === index ? { ...player, latency_ms: value } : player)) } })),
    );
    const statuses = new Set<number>();
    await fc.assert(
      fc.asyncProperty(fc.constantFrom('balance', 'audit', 'rank', 'server'), body, async (route, text) => {
        const answer = await post(`${service.url}/v1/${route}`, text);
        statuses.add(answer.status);
        expect([200, 400]).toContain(answer.status);
        if (answer.status === 400) expect(JSON.parse(answer.text).issues.length).toBeGreaterThan(0);
        expect(answer.text).not.toMatch(/NaN|Infinity/);
      }),
      { seed: 17, numRuns: 300 },
    );
    expect(statuses).toContain(400);
  });

  it('GET /healthz, /readyz, /openapi.json (OpenAPI 3.1 from the body schemas) and /metrics (Prometheus text)', async () => {
    expect((await fetch(`${service.url}/healthz`)).status).toBe(200);
    expect(await (await fetch(`${service.url}/readyz`)).json()).toEqual({ status: 'ready' });
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- a JSON document walked by field names
    const openApi = (await (await fetch(`${service.url}/openapi.json`)).json()) as any;
    expect(openApi.openapi).toBe('3.1.0');
    expect(Object.keys(openApi.paths)).toEqual(expect.arrayContaining(['/v1/balance', '/v1/audit', '/v1/rank', '/v1/server', '/healthz', '/readyz', '/metrics', '/openapi.json']));
    const lobbySchema = openApi.components.schemas.BalanceBody.properties.lobby;
    expect(lobbySchema.properties.players.maxItems).toBe(256); // the lobby format's limit, from the same zod schema
    expect(lobbySchema.required).toEqual(expect.arrayContaining(['format', 'match_id', 'attribute', 'difficulty', 'players']));
    await post(`${service.url}/v1/balance`, '{"lobby": 1}');
    const metrics = await fetch(`${service.url}/metrics`);
    expect(metrics.headers.get('content-type')).toContain('text/plain');
    const text = await metrics.text();
    expect(text).toMatch(/^lagparity_http_requests_total\{route="\/v1\/balance",method="POST",status="400"\} \d+$/m);
    expect(text).toMatch(/^lagparity_http_request_duration_seconds_bucket\{le="0\.005",route="\/v1\/balance"\} \d+$/m);
    expect(text).toMatch(/^lagparity_http_request_duration_seconds_count\{route="\/v1\/balance"\} \d+$/m);
  });

  it('writes one JSON line per request on stdout (request id, route, status, duration) and no bodies', async () => {
    const answer = await fetch(`${service.url}/v1/balance`, { method: 'POST', body: `{"lobby": ${lobbyText}}`, headers: { 'x-request-id': 'match-7781' } });
    expect(answer.headers.get('x-request-id')).toBe('match-7781');
    await expect.poll(() => service.stdout(), { timeout: 5000 }).toContain('match-7781');
    const lines = service.stdout().split('\n').filter(Boolean).map((line) => JSON.parse(line) as Record<string, unknown>);
    for (const line of lines) expect(Object.keys(line)).toEqual(expect.arrayContaining(['time', 'request_id', 'method', 'route', 'status', 'duration_ms']));
    const mine = lines.filter((line) => line.request_id === 'match-7781');
    expect(mine).toHaveLength(1);
    expect(mine[0]).toMatchObject({ method: 'POST', route: '/v1/balance', status: 200 });
    expect(mine[0]?.duration_ms).toBeGreaterThan(0);
    expect(service.stdout()).not.toContain('harbourline'); // no lobby content
  });
});

describe('lagparity serve: limits, signals and start-up', () => {
  it('413 above --max-body-bytes, 400 above --max-players, each naming its limit', async () => {
    const service = await startService(['--model', modelPath, '--max-body-bytes', '2000', '--max-players', '4']);
    try {
      const big = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}, "pad": "${'x'.repeat(3000)}"}`);
      expect(big.status).toBe(413);
      expect(JSON.parse(big.text).issues[0]).toMatchObject({ code: 'too_large', message: expect.stringContaining('2000 bytes') });
      const lobby = JSON.parse(lobbyText);
      lobby.players = lobby.players.slice(0, 5);
      const many = await post(`${service.url}/v1/balance`, JSON.stringify({ lobby }));
      expect(many.status).toBe(400);
      expect(JSON.parse(many.text).issues[0]).toMatchObject({ code: 'too_many_players', path: 'lobby.players', message: expect.stringContaining('--max-players') });
    } finally {
      service.kill();
      await service.exited;
    }
  });

  it('408 when a body does not arrive within --request-timeout-ms', async () => {
    const service = await startService(['--model', modelPath, '--request-timeout-ms', '400']);
    try {
      const head = 'POST /v1/balance HTTP/1.1\r\nHost: localhost\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{"lobby": ';
      const started = Date.now();
      const text = await rawExchange(service.url, [head]);
      expect(text).toMatch(/^HTTP\/1\.1 408/);
      expect(Date.now() - started).toBeLessThan(3000);
    } finally {
      service.kill();
      await service.exited;
    }
  });

  it('SIGTERM: stops accepting, answers the request in flight, exits 0', async () => {
    const service = await startService(['--model', modelPath]);
    const body = `{"lobby": ${lobbyText}}`;
    const head = `POST /v1/balance HTTP/1.1\r\nHost: localhost\r\nContent-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\nConnection: close\r\n\r\n`;
    const half = Math.floor(body.length / 2);
    const answer = rawExchange(service.url, [head + body.slice(0, half), body.slice(half)], async () => {
      await new Promise((resolve) => setTimeout(resolve, 300));
      service.kill('SIGTERM');
      await new Promise((resolve) => setTimeout(resolve, 300));
      // Draining: a new connection is refused.
      await expect(fetch(`${service.url}/healthz`)).rejects.toThrow();
    });
    const text = await answer;
    expect(text).toMatch(/^HTTP\/1\.1 200 OK/);
    expect(text).toContain('"format": "lagparity/balance-result@1"');
    expect(await service.exited).toBe(0);
    expect(service.stderr()).toContain('draining');
  });

  it('SIGHUP reloads a good model file and keeps the old model when the file is broken', async () => {
    const folder = mkdtempSync(join(tmpdir(), 'lagparity-serve-model-'));
    const live = join(folder, 'model.json');
    copyFileSync(modelPath, live);
    const service = await startService(['--model', live]);
    try {
      const first = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}}`);
      copyFileSync(join(MATCHES, 'ground-truth.model.json'), live);
      service.kill('SIGHUP');
      await expect.poll(() => service.stderr(), { timeout: 5000 }).toContain('model_reloaded');
      const second = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}}`);
      expect(second.status).toBe(200);
      expect(JSON.parse(second.text).lobbies[0].target).not.toBe(JSON.parse(first.text).lobbies[0].target);
      writeFileSync(live, '{"format": "lagparity/model@1", "link": ');
      service.kill('SIGHUP');
      await expect.poll(() => service.stderr(), { timeout: 5000 }).toContain('model_reload_failed');
      const third = await post(`${service.url}/v1/balance`, `{"lobby": ${lobbyText}}`);
      expect(third.text).toBe(second.text);
      expect(await (await fetch(`${service.url}/metrics`)).text()).toMatch(/lagparity_model_reloads_total\{result="kept_old"\} 1/);
    } finally {
      service.kill();
      expect(await service.exited).toBe(0);
    }
  });

  it('exits 2 with the reason on a model that does not load, a bad option, or a port in use', async () => {
    expect(runCli(['serve', '--model', join(MATCHES, 'league-rules.json'), '--port', '0'])).toMatchObject({ status: 2 });
    expect(runCli(['serve', '--model', modelPath, '--port', '70000'])).toMatchObject({ status: 2, stderr: expect.stringContaining('`--port` requires a whole number from 0 to 65535') });
    const service = await startService(['--model', modelPath]);
    try {
      const port = new URL(service.url).port;
      expect(runCli(['serve', '--model', modelPath, '--port', port])).toMatchObject({ status: 2, stderr: expect.stringContaining('the port is in use') });
    } finally {
      service.kill();
      await service.exited;
    }
  });
});
