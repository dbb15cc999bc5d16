import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { runCli } from '../helpers/cli.js';
import { MATCHES, ROOT } from '../helpers/demo.js';

// The ground-truth model keeps these outputs stable when matches/model.json is refitted.
const model = join(MATCHES, 'ground-truth.model.json');
const rules = join(MATCHES, 'league-rules.json');
const schema = (name: string) => JSON.parse(readFileSync(join(ROOT, 'docs', 'schemas', name), 'utf8')) as object;
const ajv = new Ajv2020({ strict: false, allErrors: true }); // a general-purpose JSON Schema validator as the outside reference

describe('lagparity audit', () => {
  it('audits the bundled lobbies: both verdicts, at least three binding rules, exit 1', () => {
    const run = runCli(['audit', MATCHES, '--model', model, '--rules', rules]);
    expect(run.status).toBe(1);
    expect(run.stdout).toMatch(/: within rules$/m);
    expect(run.stdout).toMatch(/: outside rules \(\d reasons?\)/m);
    expect(run.stdout).not.toMatch(/\b(PASS|FAIL|pass|fail)\b/);
    const bindingLine = run.stdout.split('\n').find((line) => line.startsWith('Binding constraints')) ?? '';
    expect(bindingLine.match(/(cap|soft_cap|ratio|budget|quantisation|ineligible) \d+/g)?.length).toBeGreaterThanOrEqual(3);
    expect(run.stdout).toContain('Caution: Compensation changes competitive outcomes');
  });

  it('writes the summary table as people see it', () => {
    const run = runCli(['audit', MATCHES, '--model', model, '--rules', rules]);
    const summary = run.stdout.slice(run.stdout.indexOf('Summary'));
    expect(summary).toMatchInlineSnapshot(`
      "Summary
      2 of 5 lobbies within rules, 3 outside; 1 player(s) excluded above the latency limit.
      ┌─────────────────────────────────┬───────────────┬───────────┬─────────┐
      │ lobby                           │ verdict       │ worst gap │ reasons │
      │ harbourline-s3-w05-owls-stags   │ outside rules │     0.132 │       3 │
      │ harbourline-open-ffa-0117       │ outside rules │     0.071 │       5 │
      │ harbourline-s3-w06-herons-stags │ outside rules │     0.000 │       1 │
      │ harbourline-s3-w04-herons-foxes │ within rules  │     0.000 │       0 │
      │ harbourline-cup-r1-foxes-owls   │ within rules  │     0.000 │       0 │
      └─────────────────────────────────┴───────────────┴───────────┴─────────┘
      Binding constraints (players): soft_cap 4, cap 3, ineligible 1; binds most often: soft_cap.
      Failing rules (lobbies): accepted_gap 2, accepted_duel_deviation 2, latency_limit_ms 1, accepted_team_gap 1.
      Caution: Compensation changes competitive outcomes: disclose it to the players; the league's own rules and officials decide.
      "
    `);
  });

  it('prints the per-player table of a capped lobby', () => {
    const run = runCli(['audit', join(MATCHES, 'far-player-5v5.lobby.json'), '--model', model, '--rules', rules]);
    expect(run.status).toBe(1);
    expect(run.stdout.slice(0, run.stdout.indexOf('Summary')).trimEnd()).toMatchInlineSnapshot(`
      "harbourline-s3-w05-owls-stags (far-player-5v5.lobby.json): outside rules (3 reasons)
      ┌─────────────┬─────────────────┬────────────┬───────┬───────────────┬──────────────┬───────────────┬─────────┬────────────┐
      │ player      │ team            │ latency ms │ scale │ P(hit) before │ P(hit) after │ gap to target │ held by │ spike gain │
      │ mirefoot    │ Glasswater Owls │       16.0 │ 1.000 │         0.568 │        0.568 │         0.000 │ none    │          - │
      │ oakhollow   │ Glasswater Owls │       22.0 │ 1.029 │         0.556 │        0.568 │         0.000 │ none    │          - │
      │ rushwater   │ Glasswater Owls │       29.0 │ 1.062 │         0.542 │        0.568 │         0.000 │ none    │          - │
      │ saltgrin    │ Glasswater Owls │       35.0 │ 1.091 │         0.530 │        0.568 │         0.000 │ none    │          - │
      │ thistledown │ Glasswater Owls │       44.0 │ 1.134 │         0.512 │        0.568 │         0.000 │ none    │          - │
      │ vellumcrest │ Ironreed Stags  │       19.0 │ 1.014 │         0.562 │        0.568 │         0.000 │ none    │          - │
      │ wickerby    │ Ironreed Stags  │       26.0 │ 1.048 │         0.548 │        0.568 │         0.000 │ none    │          - │
      │ yarrowind   │ Ironreed Stags  │       33.0 │ 1.082 │         0.534 │        0.568 │         0.000 │ none    │          - │
      │ cinderfell  │ Ironreed Stags  │       47.0 │ 1.149 │         0.506 │        0.568 │         0.000 │ none    │          - │
      │ driftmoor   │ Ironreed Stags  │      205.0 │ 1.500 │         0.224 │        0.436 │         0.132 │ cap     │          - │
      └─────────────┴─────────────────┴────────────┴───────┴───────────────┴──────────────┴───────────────┴─────────┴────────────┘
      target P(hit) 0.568; largest gap 0.343 -> 0.132; Jain's index 0.9652 -> 0.9949; team gap 0.067 -> 0.026; worst equal-skill duel off even odds 0.410 -> 0.167; gain from faked lag spikes 0.000 (accepted up to 0.010); from delaying every packet 0.153 (not judged: only measuring on the server bounds it)
        outside rules: residual gap 0.132 above the accepted 0.020 for player "driftmoor", held by the cap 1.50
        outside rules: an equal-skill duel of "mirefoot" against "driftmoor" (first to 3 hits, simultaneous volleys) is won 0.667 of the time: 0.167 from even odds, above the accepted 0.050
        outside rules: team gap 0.026 between "Glasswater Owls" and "Ironreed Stags" above the accepted 0.020"
    `);
  });

  it('writes one JSON document matching docs/schemas/audit-result.schema.json, nothing else on stdout', () => {
    const run = runCli(['audit', MATCHES, '--model', model, '--rules', rules, '--json']);
    expect(run.status).toBe(1);
    const document = JSON.parse(run.stdout);
    const validate = ajv.compile(schema('audit-result.schema.json'));
    expect(validate(document), JSON.stringify(validate.errors)).toBe(true);
    expect(document.summary.lobbies).toBe(5);
  });

  it('exits 0 when every lobby passes, reading the lobby from stdin', () => {
    const run = runCli(['audit', '-', '--model', model, '--rules', rules, '--json'], { input: readFileSync(join(MATCHES, 'even-5v5.lobby.json'), 'utf8') });
    expect(run.status).toBe(0);
    expect(JSON.parse(run.stdout).lobbies[0].source).toBe('stdin');
  });

  it('writes Markdown with --format markdown', () => {
    const run = runCli(['audit', join(MATCHES, 'even-5v5.lobby.json'), '--model', model, '--rules', rules, '--format', 'markdown']);
    expect(run.status).toBe(0);
    expect(run.stdout).toMatch(/^# Audit/);
    expect(run.stdout).toContain('| player | team |');
  });

  it('sweeps the cap: per value the lobbies within rules, the failing rules, what binds, who is excluded; exit as an audit', () => {
    const run = runCli(['audit', MATCHES, '--model', model, '--rules', rules, '--sweep', 'scale_cap=1.2:2.0:0.2', '--json']);
    // A demo lobby has a player above the latency limit: no cap puts every lobby within rules.
    expect(run.status).toBe(1);
    const document = JSON.parse(run.stdout);
    expect(ajv.compile(schema('audit-sweep.schema.json'))(document)).toBe(true);
    expect(document.rows.map((row: { value: number }) => row.value)).toEqual([1.2, 1.4, 1.6, 1.8, 2]);
    expect(document.smallest_value_within_rules).toBeNull();
    // 1.2 is refused: the league's soft cap starts at 1.35, above it; the note says so.
    expect(document.rows[0]).toMatchObject({ valid: false });
    expect(document.rows[0].issues[0]).toMatch(/soft-cap threshold below `scale_cap`/);
    for (const row of document.rows.slice(1)) expect(row).toMatchObject({ valid: true, excluded_players: 1, failing_rules: { latency_limit_ms: 1 } });
    expect(document.rows.at(-1).most_binding).toBe('soft_cap');
    const table = runCli(['audit', MATCHES, '--model', model, '--rules', rules, '--sweep', 'scale_cap=1.2,1.6']);
    expect(table.stdout).toContain('Sweep of scale_cap');
    expect(table.stdout).toMatch(/│\s+1\.6 │\s+\d\/5 │/);
    expect(table.stdout).toContain('No swept value of scale_cap puts every lobby within rules.');
  });

  it('refuses a rules file that contradicts itself, with the reason, exit 2', () => {
    const folder = mkdtempSync(join(tmpdir(), 'lagparity-audit-'));
    const path = join(folder, 'rules.json');
    writeFileSync(path, JSON.stringify({ format: 'lagparity/rules@1', scale_floor: 1.2, scale_cap: 1.1 }));
    const run = runCli(['audit', MATCHES, '--model', model, '--rules', path]);
    expect(run.status).toBe(2);
    expect(run.stderr).toContain('rules.json:scale_cap: error contradictory_rules');
    expect(run.stdout).toBe('');
  });

  it('refuses a bad sweep and a bad format option with exit 2', () => {
    expect(runCli(['audit', MATCHES, '--model', model, '--rules', rules, '--sweep', 'colour=1:2:1']).status).toBe(2);
    expect(runCli(['audit', MATCHES, '--model', model, '--rules', rules, '--format', 'pdf']).status).toBe(2);
  });

  it('documents exit codes and an example in --help', () => {
    const run = runCli(['audit', '--help']);
    expect(run.stdout).toContain('Exit codes: 0 every lobby within rules');
    expect(run.stdout).toContain('--sweep scale_cap=1.2:2.0:0.1');
  });
});
