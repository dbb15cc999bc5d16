import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { MATCHES } from '../helpers/demo.js';

const base = ['report', '--trials', join(MATCHES, 'playtest-trials.csv'), '--model', join(MATCHES, 'ground-truth.model.json')];

function folder(): string {
  return mkdtempSync(join(tmpdir(), 'lagparity-report-'));
}

describe('lagparity report', () => {
  it('writes one self-contained HTML file with the lobbies and says so on stdout', () => {
    const out = join(folder(), 'report.html');
    const run = runCli([...base, '--lobbies', join(MATCHES, 'even-5v5.lobby.json'), join(MATCHES, 'far-player-5v5.lobby.json'), '--rules', join(MATCHES, 'league-rules.json'), '--out', out]);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    expect(run.stdout).toBe(`wrote ${out} (8 charts)\n`);
    const html = readFileSync(out, 'utf8');
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html.match(/<svg[\s>]/g)).toHaveLength(8);
    expect(html).toContain('harbourline-s3-w05-owls-stags');
    expect(html).toContain('The trials file is the one the model file names as its data');
  });

  it('refuses to overwrite without --force, leaving the old file whole, and replaces it with --force', () => {
    const dir = folder();
    const out = join(dir, 'report.html');
    writeFileSync(out, 'keep me');
    const refused = runCli([...base, '--out', out]);
    expect(refused.status).toBe(2);
    expect(refused.stdout).toBe('');
    expect(refused.stderr).toContain(`${out}: error file_exists`);
    expect(readFileSync(out, 'utf8')).toBe('keep me');
    const forced = runCli([...base, '--out', out, '--force']);
    expect(forced.status).toBe(0);
    expect(readFileSync(out, 'utf8')).toContain('<!doctype html>');
    expect(readdirSync(dir)).toEqual(['report.html']);
  });

  it('exits 2 naming the file, line and field of a bad trials row, and writes nothing', () => {
    const dir = folder();
    const trials = join(dir, 'bad.csv');
    writeFileSync(trials, 'latency_ms,scale,difficulty,hits,attempts\n40,1,standard,3,10\n40,-1,standard,3,10\n');
    const out = join(dir, 'report.html');
    const run = runCli(['report', '--trials', trials, '--model', join(MATCHES, 'ground-truth.model.json'), '--out', out]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('bad.csv:3:scale');
    expect(run.stderr).not.toMatch(/\n\s+at /);
    expect(readdirSync(dir)).toEqual(['bad.csv']);
  });

  it('exits 2 when the trials name a difficulty the model does not know', () => {
    const dir = folder();
    const trials = join(dir, 'other.csv');
    writeFileSync(trials, 'latency_ms,scale,difficulty,hits,attempts\n40,1,nightmare,3,10\n');
    const run = runCli(['report', '--trials', trials, '--model', join(MATCHES, 'ground-truth.model.json'), '--out', join(dir, 'r.html')]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('other.csv:difficulty: error wrong_difficulty');
  });

  it('exits 2 without --out', () => {
    const run = runCli(base);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('--out');
  });
});
