import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';

const model = join(MATCHES, 'model.json');
const rules = join(MATCHES, 'league-rules.json');

describe('lagparity balance', () => {
  it('balances every bundled lobby and exits 0', () => {
    const run = runCli(['balance', MATCHES, '--model', model, '--rules', rules]);
    expect(run.status).toBe(0);
    for (const id of ['harbourline-s3-w04-herons-foxes', 'harbourline-s3-w05-owls-stags', 'harbourline-open-ffa-0117', 'harbourline-s3-w06-herons-stags']) {
      expect(run.stdout).toContain(id);
    }
    expect(run.stdout).toContain('ineligible');
    expect(run.stdout).toMatch(/│ cap\s+│/);
    expect(run.stderr).toContain('Caution: compensation changes competitive outcomes');
  });

  it('writes one JSON document and nothing else on stdout with --json', () => {
    const run = runCli(['balance', join(MATCHES, 'even-5v5.lobby.json'), '--model', model, '--json']);
    expect(run.status).toBe(0);
    const document = JSON.parse(run.stdout);
    expect(document.format).toBe('lagparity/balance-result@1');
    expect(document.lobbies).toHaveLength(1);
    const [lobby] = document.lobbies;
    expect(lobby.status).toBe('balanced');
    for (const player of lobby.players) expect(Math.abs(player.expected_after - lobby.target)).toBeLessThan(1e-9);
  });

  it('reads a lobby from standard input with -', () => {
    const run = runCli(['balance', '-', '--model', model, '--json'], { input: readFileSync(join(MATCHES, 'even-5v5.lobby.json'), 'utf8') });
    expect(run.status).toBe(0);
    expect(JSON.parse(run.stdout).lobbies[0].match_id).toBe('harbourline-s3-w04-herons-foxes');
  });

  it('exits 2 with the file and field path on a bad lobby, without a stack trace', () => {
    const folder = mkdtempSync(join(tmpdir(), 'lagparity-'));
    const path = join(folder, 'broken.lobby.json');
    writeFileSync(path, JSON.stringify({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 'veteran', players: [{ id: 'a', latency_ms: 'slow' }] }));
    const run = runCli(['balance', path, '--model', model]);
    expect(run.status).toBe(2);
    expect(run.stdout).toBe('');
    expect(run.stderr).toContain('broken.lobby.json:players[0].latency_ms');
    expect(run.stderr).not.toMatch(/\n\s+at /);
  });

  it('exits 2 on a missing model file and on a missing required option', () => {
    expect(runCli(['balance', MATCHES, '--model', join(MATCHES, 'nope.json')]).status).toBe(2);
    expect(runCli(['balance', MATCHES]).status).toBe(2);
  });

  it('exits 2 when the lobby difficulty is not one the model knows', () => {
    const run = runCli(['balance', '-', '--model', model], { input: JSON.stringify({ format: 'lagparity/lobby@1', match_id: 'm', attribute: 'hit_area', difficulty: 'nightmare', players: [{ id: 'a', latency_ms: 20 }] }) });
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('wrong_difficulty');
  });

  it('prints help with a worked example', () => {
    const run = runCli(['balance', '--help']);
    expect(run.status).toBe(0);
    expect(run.stdout).toContain('Example:');
  });
});

describe('lagparity choose-server', () => {
  const servers = join(MATCHES, 'cup-final.lobby-servers.json');

  it('ranks the servers, says which was chosen and why, and balances the match there', () => {
    const run = runCli(['choose-server', servers, '--model', model, '--rules', rules]);
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/│ midland-central │ solved │\s+0\.000 │/);
    expect(run.stdout).toContain('chosen: midland-central rather than reach-west: its worst residual gap is smaller');
    expect(run.stdout).toMatch(/│ harbour-east\s+│ solved │.*│ driftmoor\s+│/);
    expect(run.stdout).toContain('harbourline-cup-final-herons-stags (hit_area, difficulty elite): balanced');
    expect(run.stderr).toContain('Caution: compensation changes competitive outcomes');
  });

  it('writes one JSON document with --json', () => {
    const run = runCli(['choose-server', servers, '--model', model, '--rules', rules, '--json']);
    expect(run.status).toBe(0);
    const document = JSON.parse(run.stdout);
    expect([document.format, document.status, document.server, document.servers.length]).toEqual(['lagparity/server-choice@1', 'chosen', 'midland-central', 3]);
    expect(document.best.players).toHaveLength(10);
  });

  it('refuses a lobby missing a latency to a listed server, naming the place, exit 2', () => {
    const document = JSON.parse(readFileSync(servers, 'utf8'));
    delete document.players[3].latency_ms['reach-west'];
    const folder = mkdtempSync(join(tmpdir(), 'lagparity-servers-'));
    const path = join(folder, 'broken.lobby-servers.json');
    writeFileSync(path, JSON.stringify(document));
    const run = runCli(['choose-server', path, '--model', model]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('broken.lobby-servers.json:players[3].latency_ms.reach-west: error missing_server_latency');
  });
});
