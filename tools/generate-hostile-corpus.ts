/**
 * Writes the hostile-input corpus, test/fixtures/hostile/: one file per case
 * and cases.json, the table of what each case must get (issue 15). Files that
 * are awkward to write by hand (10,000-deep nesting, UTF-16 and UTF-32, bytes
 * that are not UTF-8, raw control characters, lobbies at the documented
 * limits) are why this is a script; every case, generated or not, is a row
 * of the table. The documents are invented (a fictional league's names) and
 * written here from scratch, so the corpus does not move when matches/ does.
 *
 * Run: npm run corpus:generate   (test/security/hostile-corpus.test.ts checks
 * that the committed files are exactly what this writes).
 *
 * A row: `file`; `command` (how the test runs it; the list is in
 * test/security/hostile-corpus.test.ts and test/fixtures/hostile/README.md);
 * `exit` (the documented exit code: 0 ok, 1 a check failed, 2 bad input);
 * `code` (an issue code the output must carry, or null); `place` (the start of
 * that issue's line: the file, then the line and column or the field path);
 * `line` (where the issue must name a line: the number it must name); `shows`
 * (text the output must contain, such as an id's escaped form); `issues` (how
 * many issue lines, where one is the point); `note`.
 */
import { mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileModel } from '../src/model/compile.js';
import { compileRules } from '../src/solver/rules.js';
import { MatchSession, type SessionEvent } from '../src/session/match-session.js';

export interface HostileCase {
  readonly file: string;
  readonly command: string;
  readonly exit: 0 | 1 | 2;
  readonly code: string | null;
  readonly place: string | null;
  readonly line?: number;
  /** Text the output (stdout or stderr) must contain: an escaped id, the range a message gives. */
  readonly shows?: string;
  /** How many issue lines the output must have, where that is the point (one wrong_kind issue). */
  readonly issues?: number;
  readonly note: string;
}

export interface HostileCorpus {
  readonly files: Map<string, Uint8Array>;
  readonly cases: HostileCase[];
}

// ---------------------------------------------------------------- base documents (invented)

const NAMES = ['kestrelby', 'dunmoor', 'fallowick', 'sedgecombe', 'wrenholt', 'ashcarrow'];

function lobby(): Record<string, unknown> {
  return {
    format: 'lagparity/lobby@1',
    match_id: 'tidewater-s1-w02-gulls-otters',
    attribute: 'hit_area',
    difficulty: 'veteran',
    players: NAMES.map((id, index) => ({ id, team: index < 3 ? 'Tidewater Gulls' : 'Marram Otters', latency_ms: 20 + 17 * index })),
  };
}

function serverLobby(): Record<string, unknown> {
  const servers = ['quay-north', 'fen-central', 'cliff-west'];
  return {
    format: 'lagparity/lobby-servers@1',
    match_id: 'tidewater-cup-gulls-otters',
    attribute: 'hit_area',
    difficulty: 'elite',
    servers,
    players: NAMES.map((id, index) => ({ id, team: index < 3 ? 'Tidewater Gulls' : 'Marram Otters', latency_ms: Object.fromEntries(servers.map((server, at) => [server, 15 + 9 * index + 30 * at])) })),
  };
}

/** The demo's ground-truth coefficients with an invented, positive definite covariance. */
function model(): Record<string, unknown> {
  const names = ['intercept', 'latency', 'log_scale', 'difficulty[veteran]', 'difficulty[elite]', 'latency_x_log_scale'];
  const variances = [1e-3, 5e-8, 5e-3, 4e-4, 4e-4, 2.5e-7];
  return {
    format: 'lagparity/model@1',
    label: 'hostile corpus base model (invented coefficients)',
    family: 'binomial',
    link: 'logit',
    terms: ['intercept', 'latency', 'log_scale', 'difficulty', 'latency_x_log_scale'],
    difficulty: { kind: 'levels', levels: ['standard', 'veteran', 'elite'], reference: 'standard' },
    coefficients: {
      names,
      estimates: [0.9, -0.008, 1.6, -0.5, -1, 0.004],
      covariance: variances.map((variance, row) => variances.map((_, column) => (row === column ? variance : 0))),
      covariance_kind: 'model',
    },
    training: { latency_ms: { min: 0, max: 250 }, scale: { min: 1, max: 2 }, difficulty: ['standard', 'veteran', 'elite'], rows: 3240, attempts: 64800, players: 36 },
    provenance: { file: 'invented-trials.csv', rows: 3240, sha256: '0'.repeat(64), created_by: 'tools/generate-hostile-corpus.ts' },
  };
}

/** A model with a numeric difficulty (a difficulty of 0 to 10 in training). */
function numericModel(): Record<string, unknown> {
  return {
    ...model(),
    label: 'hostile corpus numeric-difficulty model (invented coefficients)',
    terms: ['intercept', 'latency', 'log_scale', 'difficulty'],
    difficulty: { kind: 'numeric' },
    coefficients: {
      names: ['intercept', 'latency', 'log_scale', 'difficulty'],
      estimates: [1.2, -0.008, 1.6, -0.1],
      covariance: [
        [1e-3, 0, 0, 0],
        [0, 5e-8, 0, 0],
        [0, 0, 5e-3, 0],
        [0, 0, 0, 1e-4],
      ],
      covariance_kind: 'model',
    },
    training: { latency_ms: { min: 0, max: 250 }, scale: { min: 1, max: 2 }, difficulty: { min: 0, max: 10 }, rows: 3240, attempts: 64800, players: 36 },
  };
}

function rules(): Record<string, unknown> {
  return {
    format: 'lagparity/rules@1',
    scale_floor: 1,
    scale_cap: 1.5,
    max_scale_ratio: null,
    latency_limit_ms: 220,
    accepted_gap: 0.02,
    quantisation_step: null,
    soft_cap: { above: 1.35, fraction: 0.5 },
    latency_estimator: { percentile: 10 },
    accepted_duel_deviation: 0.05,
    accepted_team_gap: 0.02,
    accepted_exploit_gain: 0.01,
  };
}

function plan(): Record<string, unknown> {
  return {
    format: 'lagparity/playtest-plan@1',
    label: 'Tidewater league: hostile corpus plan',
    latency_ms: [0, 60, 120],
    scale: [1, 1.5],
    difficulty: ['standard', 'elite'],
    repetitions: 2,
    participants: 8,
    practice_rounds: 1,
    round_seconds: 40,
    pause_seconds: 10,
    attempts_per_round: 20,
    session_limit_minutes: 45,
    seed: 7,
  };
}

/** A session log recorded by MatchSession itself (so `replay` accepts it as it is). */
function sessionLog(): SessionEvent[] {
  const compiled = compileModel(model());
  const compiledRules = compileRules(rules());
  if (!compiled.ok || !compiledRules.ok) throw new Error('the corpus base model or rules do not compile');
  const events: SessionEvent[] = [];
  const session = new MatchSession(compiled.value, compiledRules.value, { match_id: 'tidewater-live-01', attribute: 'hit_area', difficulty: 'veteran' }, { record: (event) => events.push(JSON.parse(JSON.stringify(event)) as SessionEvent) });
  NAMES.slice(0, 4).forEach((id, index) => session.join(id, index < 2 ? 'Tidewater Gulls' : 'Marram Otters', index));
  for (let round = 0; round < 3; round += 1) {
    NAMES.slice(0, 4).forEach((id, index) => {
      for (let sample = 0; sample < 5; sample += 1) session.sample(id, 20 + 25 * index + sample + round);
    });
    session.safePoint(10 + round);
  }
  return events;
}

/** A small trials file for `report --trials` (invented counts on a grid, deterministic). */
function trialsCsv(): string {
  const rows = ['player,latency_ms,scale,difficulty,hits,attempts'];
  let state = 12345;
  for (const player of NAMES) {
    for (const latency of [10, 80, 160, 240]) {
      for (const scale of [1, 1.5, 2]) {
        for (const difficulty of ['standard', 'veteran', 'elite']) {
          state = (state * 1103515245 + 12345) % 2147483648;
          const logit = 0.9 - 0.008 * latency + 1.6 * Math.log(scale) - (difficulty === 'veteran' ? 0.5 : difficulty === 'elite' ? 1 : 0);
          const hits = Math.min(20, Math.max(0, Math.round(20 / (1 + Math.exp(-logit)) + ((state % 5) - 2))));
          rows.push(`${player},${latency},${scale},${difficulty},${hits},20`);
        }
      }
    }
  }
  return `${rows.join('\n')}\n`;
}

// ---------------------------------------------------------------- helpers

const pretty = (value: unknown): string => `${JSON.stringify(value, null, 2)}\n`;
const utf8 = (text: string): Uint8Array => new TextEncoder().encode(text);

/** 1-based line of the first occurrence of `marker` in `text`. */
function lineOf(text: string, marker: string): number {
  const at = text.indexOf(marker);
  if (at < 0) throw new Error(`marker ${marker} not in the text`);
  return text.slice(0, at).split('\n').length;
}

/** 1-based column of the `count`-th opening bracket of a one-line text (no strings hold brackets here). */
function openerColumn(text: string, count: number): number {
  let seen = 0;
  for (let index = 0; index < text.length; index += 1) {
    if (text[index] === '[' || text[index] === '{') seen += 1;
    if (seen === count) return index + 1;
  }
  throw new Error('not so many brackets');
}

/** Replace the first occurrence of `from` (which must occur) by `to`. */
function swap(text: string, from: string, to: string): string {
  if (!text.includes(from)) throw new Error(`${from} not in the text`);
  return text.replace(from, () => to);
}

function utf16(text: string, bigEndian: boolean, mark: boolean): Uint8Array {
  const bytes = new Uint8Array((text.length + (mark ? 1 : 0)) * 2);
  const units = [...(mark ? [0xfeff] : []), ...Array.from(text, (character) => character.charCodeAt(0))];
  units.forEach((unit, index) => {
    bytes[2 * index + (bigEndian ? 0 : 1)] = unit >> 8;
    bytes[2 * index + (bigEndian ? 1 : 0)] = unit & 0xff;
  });
  return bytes;
}

function utf32(text: string, bigEndian: boolean, mark: boolean): Uint8Array {
  const points = [...(mark ? [0xfeff] : []), ...Array.from(text, (character) => character.codePointAt(0) as number)];
  const bytes = new Uint8Array(points.length * 4);
  points.forEach((point, index) => {
    for (let byte = 0; byte < 4; byte += 1) bytes[4 * index + (bigEndian ? 3 - byte : byte)] = (point >>> (8 * byte)) & 0xff;
  });
  return bytes;
}

/** `text` with `marker` (ASCII) replaced by the raw bytes given. */
function withBytes(text: string, marker: string, bytes: readonly number[]): Uint8Array {
  const at = text.indexOf(marker);
  if (at < 0) throw new Error(`marker ${marker} not in the text`);
  const before = utf8(text.slice(0, at));
  const after = utf8(text.slice(at + marker.length));
  return Uint8Array.from([...before, ...bytes, ...after]);
}

const nestedArrays = (depth: number, closed: boolean, inner = '1'): string => '['.repeat(depth) + inner + (closed ? ']'.repeat(depth) : '');
const nestedObjects = (depth: number, closed: boolean, inner = '1'): string => '{"a":'.repeat(depth) + inner + (closed ? '}'.repeat(depth) : '');
const nestedMixed = (depth: number, closed: boolean): string => {
  let open = '';
  let close = '';
  for (let level = 0; level < depth; level += 1) {
    open += level % 2 === 0 ? '[' : '{"k":';
    close = (level % 2 === 0 ? ']' : '}') + close;
  }
  return open + '0' + (closed ? close : '');
};

// ---------------------------------------------------------------- the corpus

export function hostileCorpus(): HostileCorpus {
  const files = new Map<string, Uint8Array>();
  const cases: HostileCase[] = [];
  const add = (file: string, content: string | Uint8Array, row: Omit<HostileCase, 'file'>): void => {
    if (files.has(file)) throw new Error(`${file} twice`);
    files.set(file, typeof content === 'string' ? utf8(content) : content);
    cases.push({ file, ...row });
  };
  /** A second case on a file already added. */
  const again = (file: string, row: Omit<HostileCase, 'file'>): void => {
    if (!files.has(file)) throw new Error(`${file} not added`);
    cases.push({ file, ...row });
  };
  const support = (file: string, content: string): void => {
    files.set(file, utf8(content));
  };

  const L = pretty(lobby());
  const S = pretty(serverLobby());
  const M = pretty(model());
  const N = pretty(numericModel());
  const R = pretty(rules());
  const P = pretty(plan());
  const log = sessionLog();
  const G = `${log.map((event) => JSON.stringify(event)).join('\n')}\n`;

  // The valid documents the cases run beside (not cases themselves).
  support('support-lobby.json', L);
  support('support-lobby-servers.json', S);
  support('support-model.json', M);
  support('support-numeric.model.json', N);
  support('support-rules.json', R);
  support('support-plan.json', P);
  support('support-session.jsonl', G);
  support('support-trials.csv', trialsCsv());
  // The costliest audit the limits allow: pooled samples, a ratio and a budget (formats/lobby-types.ts).
  support('support-heavy-rules.json', pretty({ ...rules(), max_scale_ratio: 1.3, assistance_budget: 20, latency_estimator: 'all_samples' }));

  // --- 1. Nesting: 10,000 deep, closed or not, at the top or inside a document (limit 64).
  const deepTop: [string, string, string][] = [
    ['arrays-closed', nestedArrays(10_000, true), 'validate'],
    ['arrays-open', nestedArrays(10_000, false), 'validate'],
    ['objects-closed', nestedObjects(10_000, true), 'validate'],
    ['objects-open', nestedObjects(10_000, false), 'validate'],
    ['mixed-closed', nestedMixed(10_000, true), 'validate'],
    ['mixed-open', nestedMixed(10_000, false), 'validate'],
  ];
  for (const [name, text, command] of deepTop) {
    add(`deep-top-${name}.json`, text, { command, exit: 2, code: 'too_deep', place: `deep-top-${name}.json:1:${openerColumn(text, 65)}`, line: 1, note: `10,000 nested ${name.replace('-', ', ')} at the top level` });
  }
  for (const kind of ['lobby', 'model', 'rules', 'lobby-servers', 'plan'] as const) {
    add(`deep-top-arrays-as-${kind}.json`, nestedArrays(10_000, true), { command: `validate:${kind}`, exit: 2, code: 'too_deep', place: `deep-top-arrays-as-${kind}.json:1:65`, line: 1, note: `10,000 nested arrays read as a ${kind} (--kind)` });
  }
  const deepPlayer = (inner: string): string => swap(L, '"latency_ms": 20', `"latency_ms": ${inner}`);
  const deepPlayerCases: [string, string][] = [
    ['arrays-closed', nestedArrays(10_000, true)],
    ['arrays-open', nestedArrays(10_000, false)],
    ['objects-closed', nestedObjects(10_000, true)],
    ['objects-open', nestedObjects(10_000, false)],
  ];
  for (const [name, inner] of deepPlayerCases) {
    const text = deepPlayer(inner);
    const line = lineOf(text, `"latency_ms": ${inner.slice(0, 1)}`);
    add(`deep-player-${name}.json`, text, { command: 'balance', exit: 2, code: 'too_deep', place: `deep-player-${name}.json:${line}:`, line, note: `10,000 nested ${name.replace('-', ', ')} as a player's latency (balance)` });
  }
  {
    const text = swap(L, '"id": "dunmoor"', `"id": "dunmoor", "extra": ${nestedMixed(10_000, true)}`);
    add('deep-player-extra-field.json', text, { command: 'validate', exit: 2, code: 'too_deep', place: `deep-player-extra-field.json:${lineOf(text, '"extra"')}:`, line: lineOf(text, '"extra"'), note: '10,000 nested values in an unknown field of the second player' });
  }
  {
    const text = swap(M, '"covariance": [', `"covariance": ${nestedArrays(10_000, true)}, "x": [`);
    add('deep-model-covariance.json', text, { command: 'balance-model', exit: 2, code: 'too_deep', place: `deep-model-covariance.json:${lineOf(text, '"covariance"')}:`, line: lineOf(text, '"covariance"'), note: 'the model (--model) with 10,000 nested arrays as its covariance' });
  }
  {
    const text = swap(R, '"soft_cap": {', `"soft_cap": ${nestedObjects(10_000, false)}`);
    add('deep-rules-soft-cap.json', text, { command: 'balance-rules', exit: 2, code: 'too_deep', place: `deep-rules-soft-cap.json:${lineOf(text, '"soft_cap"')}:`, line: lineOf(text, '"soft_cap"'), note: 'the rules (--rules) with 10,000 unclosed objects as soft_cap' });
  }
  {
    const text = swap(S, '"quay-north": 15', `"quay-north": ${nestedArrays(10_000, true)}`);
    add('deep-servers-latency.json', text, { command: 'choose-server', exit: 2, code: 'too_deep', place: `deep-servers-latency.json:${lineOf(text, '"quay-north": [')}:`, line: lineOf(text, '"quay-north": ['), note: 'a server-choice lobby with 10,000 nested arrays as a latency (choose-server)' });
  }
  {
    const text = swap(P, '"scale": [', `"scale": ${nestedArrays(10_000, true)}, "x": [`);
    add('deep-plan-scale.json', text, { command: 'plan-schedule', exit: 2, code: 'too_deep', place: `deep-plan-scale.json:${lineOf(text, '"scale"')}:`, line: lineOf(text, '"scale"'), note: 'a plan with 10,000 nested arrays as its scales (plan schedule --out)' });
  }
  {
    const lines = G.split('\n');
    lines[2] = `{"type":"leave","at":5,"id":${nestedArrays(10_000, true)}}`;
    add('deep-session-line.jsonl', lines.join('\n'), { command: 'replay', exit: 2, code: 'too_deep', place: 'deep-session-line.jsonl:3:', line: 3, note: 'a session log whose third line nests 10,000 arrays' });
  }
  {
    const text = swap(L, '"latency_ms": 20', `"latency_ms": ${nestedArrays(65, true)}`);
    add('deep-player-65.json', text, { command: 'validate:lobby', exit: 2, code: 'too_deep', place: `deep-player-65.json:${lineOf(text, '"latency_ms": [')}:`, line: lineOf(text, '"latency_ms": ['), note: 'one level beyond the limit (a player at depth 3 holding 62 arrays)' });
  }
  {
    const text = swap(L, '"latency_ms": 20', `"latency_ms": ${nestedArrays(60, true)}`);
    add('deep-player-within-limit.json', text, { command: 'validate:lobby', exit: 2, code: 'wrong_type', place: 'deep-player-within-limit.json:players[0].latency_ms[0]', line: lineOf(text, '"latency_ms": ['), note: 'nesting within the limit reaches the schema, which names the field' });
  }

  // --- 2. Duplicate keys (RFC 8259 s4, RFC 7493 s2.3): the key's path and its second line.
  const duplicate = (file: string, base: string, from: string, to: string, command: string, path: string, marker: string, note: string): void => {
    const text = swap(base, from, to);
    add(file, text, { command, exit: 2, code: 'duplicate_key', place: `${file}:${path}`, line: lineOf(text, marker), note });
  };
  duplicate('dup-player-latency.json', L, '"latency_ms": 37', '"latency_ms": 37,\n      "latency_ms": 5', 'balance', 'players[1].latency_ms', '"latency_ms": 5', 'latency_ms twice in the second player (the later value would win in JSON.parse)');
  duplicate('dup-players.json', L, '"players": [', '"players": [],\n  "players": [', 'balance', 'players', '"players": [\n', 'players twice (an empty list, then the real one)');
  duplicate('dup-format.json', L, '"format": "lagparity/lobby@1",', '"format": "lagparity/lobby@1",\n  "format": "lagparity/rules@1",', 'validate', 'format', '"format": "lagparity/rules@1"', 'the format tag twice, with two kinds');
  duplicate('dup-match-id.json', L, '"match_id": "tidewater-s1-w02-gulls-otters",', '"match_id": "tidewater-s1-w02-gulls-otters",\n  "match_id": "another",', 'validate:lobby', 'match_id', '"match_id": "another"', 'match_id twice');
  duplicate('dup-difficulty.json', L, '"difficulty": "veteran",', '"difficulty": "veteran",\n  "difficulty": "standard",', 'balance', 'difficulty', '"difficulty": "standard"', 'difficulty twice');
  duplicate('dup-player-id.json', L, '"id": "fallowick",', '"id": "fallowick",\n      "id": "sedgecombe",', 'validate:lobby', 'players[2].id', '"id": "sedgecombe",\n      "team"', 'a player id twice in one player');
  duplicate('dup-player-team.json', L, '"team": "Marram Otters",', '"team": "Marram Otters",\n      "team": "Tidewater Gulls",', 'validate:lobby', 'players[3].team', '"team": "Tidewater Gulls",\n      "latency_ms": 71', 'a team twice in one player');
  duplicate('dup-escaped-key.json', L, '"latency_ms": 54', '"latency_ms": 54,\n      "latency\\u005fms": 3', 'balance', 'players[2].latency_ms', 'latency\\u005fms', 'latency_ms twice, the second spelt with an escape (latency\\u005fms)');
  duplicate('dup-three-times.json', L, '"latency_ms": 88', '"latency_ms": 88,\n      "latency_ms": 1,\n      "latency_ms": 2', 'validate', 'players[4].latency_ms', '"latency_ms": 1', 'latency_ms three times');
  duplicate('dup-model-link.json', M, '"link": "logit",', '"link": "logit",\n  "link": "probit",', 'balance-model', 'link', '"link": "probit"', 'the model link twice (logit, then probit)');
  duplicate('dup-model-estimates.json', M, '"estimates": [', '"estimates": [1, 2, 3, 4, 5, 6],\n    "estimates": [', 'validate:model', 'coefficients.estimates', '"estimates": [\n', 'coefficients.estimates twice');
  duplicate('dup-model-kind.json', M, '"covariance_kind": "model"', '"covariance_kind": "model",\n    "covariance_kind": "assumed"', 'validate', 'coefficients.covariance_kind', '"covariance_kind": "assumed"', 'covariance_kind twice');
  duplicate('dup-model-training-max.json', M, '"max": 250', '"max": 250,\n      "max": 1e308', 'validate:model', 'training.latency_ms.max', '"max": 1e308', 'the training range maximum twice');
  duplicate('dup-rules-scale-cap.json', R, '"scale_cap": 1.5,', '"scale_cap": 1.5,\n  "scale_cap": 3,', 'balance-rules', 'scale_cap', '"scale_cap": 3', 'scale_cap twice (1.5, then 3)');
  duplicate('dup-rules-soft-cap-above.json', R, '"above": 1.35,', '"above": 1.35,\n    "above": 1.1,', 'validate:rules', 'soft_cap.above', '"above": 1.1', 'soft_cap.above twice');
  duplicate('dup-rules-limit.json', R, '"latency_limit_ms": 220,', '"latency_limit_ms": 220,\n  "latency_limit_ms": 60000,', 'audit-rules', 'latency_limit_ms', '"latency_limit_ms": 60000', 'latency_limit_ms twice (audit --rules)');
  duplicate('dup-servers.json', S, '"servers": [', '"servers": ["fen-central"],\n  "servers": [', 'choose-server', 'servers', '"servers": [\n', 'servers twice');
  duplicate('dup-server-latency.json', S, '"quay-north": 24,', '"quay-north": 24,\n        "quay-north": 1,', 'choose-server', 'players[1].latency_ms.quay-north', '"quay-north": 1,', "a server's latency twice in one player");
  duplicate('dup-plan-latency.json', P, '"latency_ms": [', '"latency_ms": [0],\n  "latency_ms": [', 'plan-schedule', 'latency_ms', '"latency_ms": [\n', 'a plan with latency_ms twice (plan schedule --out)');
  duplicate('dup-unknown-field.json', L, '"attribute": "hit_area",', '"attribute": "hit_area",\n  "note": 1,\n  "note": 2,', 'validate:lobby', 'note', '"note": 2', 'an unknown field twice: the duplicate is named, not only the unknown field');
  {
    const text = swap(L, '"latency_ms": 71', '"latency_ms": 71,\n      "latency_ms": 7').replaceAll('\n', '\r\n');
    add('dup-crlf.json', text, { command: 'balance', exit: 2, code: 'duplicate_key', place: 'dup-crlf.json:players[3].latency_ms', line: lineOf(text, '"latency_ms": 7\r'), note: 'latency_ms twice in a file with CRLF line ends: the line counted right' });
  }
  {
    const lines = G.split('\n');
    lines[1] = (lines[1] as string).replace('"type":"join",', '"type":"join","type":"leave",');
    add('dup-session-type.jsonl', lines.join('\n'), { command: 'replay', exit: 2, code: 'duplicate_key', place: 'dup-session-type.jsonl:2', line: 2, note: 'a session log line with its type twice (join, then leave)' });
  }

  // --- 3. Prototype keys anywhere, also spelt with escapes.
  const forbidden = (file: string, base: string, from: string, to: string, command: string, path: string, note: string): void => {
    add(file, swap(base, from, to), { command, exit: 2, code: 'forbidden_key', place: `${file}:${path}`, note });
  };
  forbidden('proto-escaped.json', L, '"id": "kestrelby",', '"id": "kestrelby",\n      "\\u005f_proto__": {"latency_ms": 1},', 'balance', 'players[0].__proto__', 'a __proto__ key spelt with an escape (\\u005f_proto__)');
  forbidden('proto-rules-soft-cap.json', R, '"above": 1.35,', '"above": 1.35,\n    "__proto__": {"fraction": 0.9},', 'balance-rules', 'soft_cap.__proto__', 'a __proto__ key inside the rules soft_cap');
  forbidden('proto-model-difficulty.json', M, '"reference": "standard"', '"reference": "standard",\n    "constructor": {"prototype": 1}', 'balance-model', 'difficulty.constructor', 'a constructor key inside the model difficulty');
  forbidden('proto-server-map.json', S, '"quay-north": 15,', '"quay-north": 15,\n        "prototype": 15,', 'choose-server', 'players[0].latency_ms.prototype', 'a prototype key as a server id in a latency map');
  forbidden('proto-plan.json', P, '"seed": 7', '"seed": 7,\n  "__proto__": {"seed": 8}', 'plan-schedule', '__proto__', 'a __proto__ key at the top of a plan');
  {
    const lines = G.split('\n');
    lines[1] = (lines[1] as string).replace('"type":"join",', '"type":"join","__proto__":{"reconnect":true},');
    add('proto-session-line.jsonl', lines.join('\n'), { command: 'replay', exit: 2, code: 'forbidden_key', place: 'proto-session-line.jsonl:2', line: 2, note: 'a session log line with a __proto__ key' });
  }

  // --- 4. Control characters in ids, teams and names: accepted, escaped wherever printed.
  const controls: [string, string][] = [
    ['esc', '\\u001b[31m'],
    ['nul', '\\u0000'],
    ['bel', '\\u0007'],
    ['del', '\\u007f'],
    ['csi-c1', '\\u009b2J'],
    ['bidi-override', '\\u202e'],
    ['line-separator', '\\u2028'],
    ['backspace', '\\b\\b\\b'],
  ];
  const shown: Record<string, string> = { esc: '\\u001b[31m', nul: '\\u0000', bel: '\\u0007', del: '\\u007f', 'csi-c1': '\\u009b2J', 'bidi-override': '\\u202e', 'line-separator': '\\u2028', backspace: '\\u0008\\u0008\\u0008' };
  for (const [name, escape] of controls) {
    add(`control-id-${name}.json`, swap(L, '"id": "kestrelby"', `"id": "kestrel${escape}by"`), { command: 'balance', exit: 0, code: null, place: null, shows: `kestrel${shown[name] as string}by`, note: `a player id holding ${name}: balanced, the id printed escaped in the table` });
  }
  add('control-id-esc-json.json', swap(L, '"id": "kestrelby"', '"id": "kestrel\\u001b]0;title\\u0007by"'), { command: 'balance-json', exit: 0, code: null, place: null, shows: 'kestrel\\u001b]0;title\\u0007by', note: 'an id with an OSC title sequence, balance --json: escaped in the JSON too' });
  add('control-team-esc.json', swap(L, '"team": "Tidewater Gulls"', '"team": "Tidewater\\u001b[2J Gulls"'), { command: 'audit', exit: 0, code: null, place: null, shows: 'Tidewater\\u001b[2J Gulls', note: 'a team name with ESC[2J (clear screen) through audit' });
  add('control-match-id.json', swap(L, '"match_id": "tidewater-s1-w02-gulls-otters"', '"match_id": "tidewater\\u001b[1A\\r\\u0000"'), { command: 'balance', exit: 0, code: null, place: null, note: 'a match id with cursor-up, CR and NUL' });
  add('control-server-name.json', S.replaceAll('quay-north', 'quay\\u001b[5mnorth'), { command: 'choose-server', exit: 0, code: null, place: null, shows: 'quay\\u001b[5mnorth', note: 'a server id with ESC[5m (blink) through choose-server' });
  add('control-report-ids.json', swap(swap(L, '"id": "kestrelby"', '"id": "kestrel\\u001b[31m\\u202eby"'), '"team": "Tidewater Gulls"', '"team": "Tide\\u0007water"'), { command: 'report-lobby', exit: 0, code: null, place: null, note: 'ids and teams with ESC, a bidi override and BEL in the HTML report: written, with no raw control character in it' });
  add('control-unknown-key-json.json', swap(L, '"attribute": "hit_area",', '"attribute": "hit_area",\n  "x\\u001b[31m\\u202ey": 1,'), { command: 'validate-json', exit: 2, code: null, place: null, shows: 'x\\u001b[31m\\u202ey', note: 'validate --json on an unknown key with ESC and a bidi override: the JSON document holds the escapes' });
  add('control-team-audit-json.json', swap(L, '"team": "Marram Otters"', '"team": "Marram\\u009b31m Otters"'), { command: 'audit-json', exit: 0, code: null, place: null, shows: 'Marram\\u009b31m Otters', note: 'audit --json with a C1 CSI (U+009B) in a team name' });
  add('control-id-duplicate.json', swap(L, '"id": "dunmoor"', '"id": "kestrelby\\u0000"').replace('"id": "kestrelby"', '"id": "kestrelby\\u0000"'), { command: 'validate:lobby', exit: 2, code: 'duplicate_player', place: 'control-id-duplicate.json:players[1].id', note: 'two ids equal with their NUL: the duplicate named, the NUL escaped' });
  add('control-unknown-key.json', swap(L, '"attribute": "hit_area",', '"attribute": "hit_area",\n  "x\\u001b[31my": 1,'), { command: 'validate', exit: 2, code: 'unknown_field', place: 'control-unknown-key.json', shows: 'x\\u001b[31my', note: 'an unknown key with ESC: named escaped in the issue' });
  add('control-difficulty.json', swap(L, '"difficulty": "veteran"', '"difficulty": "vet\\u001b[8meran"'), { command: 'balance', exit: 2, code: 'wrong_difficulty', place: 'control-difficulty.json:difficulty', shows: 'vet\\u001b[8meran', note: 'an unknown difficulty with ESC[8m (hidden text): named escaped' });
  add('control-format-tag.json', swap(L, '"format": "lagparity/lobby@1"', '"format": "lagparity/lobby@1\\u0007"'), { command: 'validate', exit: 2, code: 'unknown_format', place: 'control-format-tag.json:format', note: 'a format tag ending in BEL' });
  add('control-raw-in-string.json', withBytes(L, 'kestrelby', [0x6b, 0x1b, 0x5b, 0x33, 0x31, 0x6d, 0x07]), { command: 'validate', exit: 2, code: 'invalid_json', place: `control-raw-in-string.json:${lineOf(L, 'kestrelby')}:`, line: lineOf(L, 'kestrelby'), note: 'raw ESC and BEL bytes inside a string: not JSON, and not echoed raw' });
  add('control-raw-outside.json', withBytes(L, '"attribute"', [0x1b, 0x5b, 0x32, 0x4a, 0x22, 0x61, 0x74, 0x74, 0x72, 0x69, 0x62, 0x75, 0x74, 0x65, 0x22]), { command: 'validate', exit: 2, code: 'invalid_json', place: `control-raw-outside.json:${lineOf(L, '"attribute"')}:`, line: lineOf(L, '"attribute"'), note: 'a raw ESC[2J between tokens' });
  add('control-model-label.json', swap(M, '"label": "hostile corpus base model (invented coefficients)"', '"label": "model\\u001b[31m RED \\u202e"'), { command: 'balance-model', exit: 0, code: null, place: null, note: 'a model label with ESC and a bidi override: accepted' });
  add('control-rules-typo.json', swap(R, '"accepted_gap"', '"accepted\\u0007gap"'), { command: 'validate:rules', exit: 2, code: 'unknown_field', place: 'control-rules-typo.json', note: 'a rules key with BEL in it: unknown, named escaped' });
  {
    const lines = G.split('\n');
    lines[1] = (lines[1] as string).replace(/"id":"([a-z]+)"/, '"id":"$1\\u001b[31m"');
    add('control-session-id.jsonl', lines.join('\n'), { command: 'replay', exit: 1, code: null, place: null, shows: '\\u001b[31m', note: 'a session log edited to put ESC into one id (its join): the replay differs (exit 1), the id printed escaped' });
  }

  // --- 5. Encodings: UTF-16 and UTF-32 named as such, bytes that are not UTF-8 refused.
  for (const [kind, base, command] of [
    ['lobby', L, 'validate'],
    ['model', M, 'balance-model'],
    ['rules', R, 'balance-rules'],
  ] as const) {
    for (const [name, bytes, encoding] of [
      ['utf16le-bom', utf16(base, false, true), 'UTF-16 little-endian'],
      ['utf16le', utf16(base, false, false), 'UTF-16 little-endian'],
      ['utf16be-bom', utf16(base, true, true), 'UTF-16 big-endian'],
      ['utf16be', utf16(base, true, false), 'UTF-16 big-endian'],
      ['utf32le-bom', utf32(base, false, true), 'UTF-32'],
      ['utf32le', utf32(base, false, false), 'UTF-32'],
      ['utf32be-bom', utf32(base, true, true), 'UTF-32'],
      ['utf32be', utf32(base, true, false), 'UTF-32'],
    ] as const) {
      add(`encoding-${kind}-${name}.json`, bytes, { command, exit: 2, code: 'wrong_encoding', place: `encoding-${kind}-${name}.json`, shows: `got ${encoding} text`, note: `a ${kind} saved as ${encoding}${name.endsWith('bom') ? ' with a byte-order mark' : ' without a byte-order mark'} (message names ${encoding})` });
    }
  }
  add('encoding-plan-utf16le-bom.json', utf16(P, false, true), { command: 'plan-schedule', exit: 2, code: 'wrong_encoding', place: 'encoding-plan-utf16le-bom.json', note: 'a plan saved as UTF-16 (plan schedule --out)' });
  add('encoding-servers-utf16be.json', utf16(S, true, false), { command: 'choose-server', exit: 2, code: 'wrong_encoding', place: 'encoding-servers-utf16be.json', note: 'a server-choice lobby saved as UTF-16 big-endian without a mark' });
  add('encoding-session-utf16le.jsonl', utf16(G, false, true), { command: 'replay', exit: 2, code: 'wrong_encoding', place: 'encoding-session-utf16le.jsonl', note: 'a session log saved as UTF-16' });
  add('encoding-utf8-bom.json', Uint8Array.from([0xef, 0xbb, 0xbf, ...utf8(L)]), { command: 'balance', exit: 0, code: null, place: null, note: 'a UTF-8 byte-order mark: accepted' });
  const invalid: [string, number[], string][] = [
    ['lone-continuation', [0x80], 'a lone continuation byte'],
    ['latin1', [0xe9], 'a Latin-1 é (0xE9)'],
    ['overlong-slash', [0xc0, 0xaf], 'an overlong / (C0 AF)'],
    ['overlong-nul', [0xc0, 0x80], 'an overlong NUL (C0 80, "modified UTF-8")'],
    ['surrogate', [0xed, 0xa0, 0x80], 'an encoded surrogate (ED A0 80, CESU-8)'],
    ['above-max', [0xf4, 0x90, 0x80, 0x80], 'a code point above U+10FFFF'],
    ['f5', [0xf5, 0x80, 0x80, 0x80], 'a byte F5 that never occurs in UTF-8'],
    ['truncated', [0xe2, 0x82], 'a truncated three-byte sequence'],
    ['ff', [0xff], 'a byte FF'],
  ];
  for (const [name, bytes, what] of invalid) {
    add(`utf8-invalid-${name}.json`, withBytes(L, 'fallowick', [0x66, 0x61, ...bytes, 0x6c]), { command: 'balance', exit: 2, code: 'wrong_encoding', place: `utf8-invalid-${name}.json:${lineOf(L, 'fallowick')}`, line: lineOf(L, 'fallowick'), note: `${what} inside a player id` });
  }
  add('utf8-invalid-model-key.json', withBytes(M, '"label"', [0x22, 0x6c, 0xc3, 0x28, 0x22]), { command: 'balance-model', exit: 2, code: 'wrong_encoding', place: `utf8-invalid-model-key.json:${lineOf(M, '"label"')}`, line: lineOf(M, '"label"'), note: 'an invalid two-byte sequence (C3 28) in a model key' });
  add('utf8-invalid-rules-end.json', Uint8Array.from([...utf8(R), 0xf0, 0x9f]), { command: 'balance-rules', exit: 2, code: 'wrong_encoding', place: `utf8-invalid-rules-end.json:${R.split('\n').length}`, line: R.split('\n').length, note: 'a truncated four-byte sequence at the end of the rules' });
  add('utf8-invalid-plan.json', withBytes(P, 'Tidewater', [0x54, 0xfe]), { command: 'plan-schedule', exit: 2, code: 'wrong_encoding', place: `utf8-invalid-plan.json:${lineOf(P, 'Tidewater')}`, line: lineOf(P, 'Tidewater'), note: 'a byte FE in the plan label (plan schedule --out)' });
  add('utf8-lone-surrogate-escape.json', swap(L, '"id": "kestrelby"', '"id": "kestrel\\ud800by"'), { command: 'balance', exit: 2, code: 'lone_surrogate', place: 'utf8-lone-surrogate-escape.json:players[0].id', line: lineOf(L, 'kestrelby'), note: 'a lone surrogate written as an escape (\\ud800): not Unicode text (RFC 8259 s8.2, RFC 7493 s2.1); it would print as U+FFFD' });

  // --- 6. Extreme finite numbers.
  add('number-difficulty-1e308.json', swap(L, '"difficulty": "veteran"', '"difficulty": 1e308'), { command: 'balance-numeric', exit: 2, code: 'outside_training_range', place: 'number-difficulty-1e308.json:difficulty', note: 'difficulty 1e308 on a numeric model: flagged as outside training; every prediction is 0, so the lobby is rejected (target_out_of_range)' });
  again('number-difficulty-1e308.json', { command: 'balance-numeric-strict', exit: 2, code: 'outside_training_range', place: 'number-difficulty-1e308.json:difficulty', note: 'difficulty 1e308 with --strict: refused' });
  add('number-difficulty-minus-1e308.json', swap(L, '"difficulty": "veteran"', '"difficulty": -1.7976931348623157e308'), { command: 'balance-numeric', exit: 2, code: 'outside_training_range', place: 'number-difficulty-minus-1e308.json:difficulty', note: 'difficulty -MAX_VALUE on a numeric model: flagged, every prediction 1, rejected' });
  add('number-difficulty-50.json', swap(L, '"difficulty": "veteran"', '"difficulty": 50'), { command: 'balance-numeric', exit: 0, code: 'outside_training_range', place: 'number-difficulty-50.json:difficulty', note: 'difficulty 50 on a model trained on 0-10: balanced, with a warning' });
  again('number-difficulty-50.json', { command: 'balance-numeric-strict', exit: 2, code: 'outside_training_range', place: 'number-difficulty-50.json:difficulty', note: 'difficulty 50 with --strict: refused' });
  add('number-difficulty-1e309.json', swap(L, '"difficulty": "veteran"', '"difficulty": 1e309'), { command: 'balance-numeric', exit: 2, code: 'invalid_value', place: 'number-difficulty-1e309.json:difficulty', note: 'difficulty 1e309 (Infinity once read): refused' });
  add('number-difficulty-tiny.json', swap(L, '"difficulty": "veteran"', '"difficulty": 5e-324'), { command: 'balance-numeric', exit: 0, code: null, place: null, note: 'difficulty 5e-324 (the smallest subnormal): inside training' });
  add('number-latency-1e308.json', swap(L, '"latency_ms": 20', '"latency_ms": 1e308'), { command: 'balance', exit: 2, code: 'out_of_range', place: 'number-latency-1e308.json:players[0].latency_ms', note: 'a latency of 1e308 ms: beyond the 60,000 ms limit' });
  add('number-latency-60001.json', swap(L, '"latency_ms": 20', '"latency_ms": 60000.001'), { command: 'balance', exit: 2, code: 'out_of_range', place: 'number-latency-60001.json:players[0].latency_ms', note: 'a latency just above 60,000 ms' });
  add('number-latency-60000.json', swap(L, '"latency_ms": 20', '"latency_ms": 60000'), { command: 'balance', exit: 0, code: 'outside_training_range', place: 'number-latency-60000.json:players[0].latency_ms', note: 'a latency of exactly 60,000 ms: accepted, outside training' });
  add('number-latency-underflow.json', swap(L, '"latency_ms": 20', '"latency_ms": 1e-400'), { command: 'balance', exit: 0, code: null, place: null, note: 'a latency of 1e-400 (reads as 0)' });
  add('number-latency-minus-zero.json', swap(L, '"latency_ms": 20', '"latency_ms": -0'), { command: 'balance', exit: 0, code: null, place: null, note: 'a latency of -0' });
  add('number-sample-1e308.json', swap(L, '"latency_ms": 37', '"latency_ms": [30, 31, 1e308]'), { command: 'balance', exit: 2, code: 'out_of_range', place: 'number-sample-1e308.json:players[1].latency_ms[2]', note: 'a latency sample of 1e308' });
  add('number-rules-reference-1e308.json', swap(R, '"accepted_gap": 0.02,', '"accepted_gap": 0.02,\n  "target": {"kind": "reference_latency", "latency_ms": 1e308},'), { command: 'balance-rules', exit: 2, code: 'out_of_range', place: 'number-rules-reference-1e308.json:target.latency_ms', note: 'a reference latency of 1e308 in the rules: beyond 60,000 ms' });
  add('number-rules-reference-outside.json', swap(R, '"accepted_gap": 0.02,', '"accepted_gap": 0.02,\n  "target": {"kind": "reference_latency", "latency_ms": 59999},'), { command: 'balance-rules', exit: 0, code: 'outside_training_range', place: 'number-rules-reference-outside.json:target.latency_ms', note: 'a reference latency of 59,999 ms: outside training, a warning' });
  add('number-rules-reference-outside-strict.json', swap(R, '"accepted_gap": 0.02,', '"accepted_gap": 0.02,\n  "target": {"kind": "reference_latency", "latency_ms": 59999},'), { command: 'balance-rules-strict', exit: 2, code: 'outside_training_range', place: 'number-rules-reference-outside-strict.json:target.latency_ms', note: 'the same with --strict: refused' });
  add('number-rules-cap-1e308.json', swap(R, '"scale_cap": 1.5', '"scale_cap": 1e308'), { command: 'balance-rules', exit: 0, code: null, place: null, note: 'a scale cap of 1e308: accepted (scales stop at what each player needs), no Infinity or NaN printed' });
  add('number-rules-step-tiny.json', swap(R, '"quantisation_step": null', '"quantisation_step": 1e-300'), { command: 'balance-rules', exit: 2, code: 'out_of_range', place: 'number-rules-step-tiny.json:quantisation_step', note: 'a quantisation step of 1e-300: more than 1,000,000 steps' });
  add('number-rules-gap-subnormal.json', swap(R, '"accepted_gap": 0.02', '"accepted_gap": 5e-324'), { command: 'audit-rules', exit: 1, code: null, place: null, note: 'an accepted gap of 5e-324: accepted, the audit judges against it' });
  add('number-model-coefficient-1e7.json', swap(M, '"estimates": [\n      0.9,', '"estimates": [\n      1e7,'), { command: 'balance-model', exit: 2, code: 'out_of_range', place: 'number-model-coefficient-1e7.json:coefficients.estimates[0]', note: 'a coefficient of 1e7: beyond the 1e6 limit' });
  add('number-model-coefficient-1e308.json', swap(M, '"estimates": [\n      0.9,', '"estimates": [\n      -1e308,'), { command: 'balance-model', exit: 2, code: 'out_of_range', place: 'number-model-coefficient-1e308.json:coefficients.estimates[0]', note: 'a coefficient of -1e308' });
  add('number-model-covariance-1e101.json', swap(M, '"covariance": [\n      [\n        0.001,', '"covariance": [\n      [\n        1e101,'), { command: 'balance-model', exit: 2, code: 'out_of_range', place: 'number-model-covariance-1e101.json:coefficients.covariance[0][0]', note: 'a covariance entry of 1e101: beyond the 1e100 limit' });
  {
    const rankOne = (size: number): number[][] => {
      const v = Array.from({ length: size }, (_, index) => (index % 2 === 0 ? 1 : -1) * 1.3e154);
      return v.map((a) => v.map((b) => a * b));
    };
    const near = model();
    (near.coefficients as { covariance: number[][] }).covariance = rankOne(6);
    add('number-model-covariance-rank-one-1e308.json', pretty(near), { command: 'report-model', exit: 2, code: 'out_of_range', place: 'number-model-covariance-rank-one-1e308.json:coefficients.covariance[0][0]', note: 'a rank-one covariance with entries near 1e308: refused, no report written' });
    const degenerate = model();
    const v = [1e45, -1e45, 1e45, 1e45, -1e45, 1e45];
    (degenerate.coefficients as { covariance: number[][] }).covariance = v.map((a) => v.map((b) => a * b));
    add('number-model-covariance-rank-one-1e90.json', pretty(degenerate), { command: 'report-model', exit: 0, code: null, place: null, note: 'a rank-one covariance with entries 1e90 (within the limit): the report is written with no NaN in it' });
  }
  add('number-model-training-1e308.json', swap(M, '"max": 250', '"max": 1e308'), { command: 'balance-model', exit: 0, code: null, place: null, note: 'a training latency range up to 1e308: accepted, no NaN' });
  add('number-model-estimate-1e309.json', swap(M, '"estimates": [\n      0.9,', '"estimates": [\n      1e309,'), { command: 'validate:model', exit: 2, code: 'wrong_type', place: 'number-model-estimate-1e309.json:coefficients.estimates[0]', note: 'a coefficient of 1e309 (Infinity once read)' });
  add('number-plan-seed-huge.json', swap(P, '"seed": 7', '"seed": 1e300'), { command: 'plan-schedule', exit: 2, code: 'out_of_range', place: 'number-plan-seed-huge.json:seed', note: 'a plan seed of 1e300' });
  add('number-plan-latency-1e308.json', swap(P, '"latency_ms": [\n    0,', '"latency_ms": [\n    1e308,'), { command: 'plan-schedule', exit: 2, code: 'out_of_range', place: 'number-plan-latency-1e308.json:latency_ms[0]', note: 'a plan latency level of 1e308' });
  add('number-servers-latency-1e308.json', swap(S, '"quay-north": 15', '"quay-north": 1e308'), { command: 'choose-server', exit: 2, code: 'out_of_range', place: 'number-servers-latency-1e308.json:players[0].latency_ms.quay-north', note: 'a latency of 1e308 to one server' });

  // --- 7. The model's terms and covariance.
  add('model-duplicate-term.json', swap(M, '"latency_x_log_scale"\n  ]', '"latency"\n  ]'), { command: 'balance-model', exit: 2, code: 'duplicate_term', place: 'model-duplicate-term.json:terms[4]', note: 'a term named twice' });
  add('model-duplicate-intercept.json', swap(M, '"terms": [\n    "intercept",', '"terms": [\n    "intercept",\n    "intercept",'), { command: 'validate:model', exit: 2, code: 'duplicate_term', place: 'model-duplicate-intercept.json:terms[1]', note: 'the intercept twice' });
  add('model-covariance-nan-row.json', swap(M, '"covariance": [\n      [', '"covariance": [\n      "row",\n      ['), { command: 'validate:model', exit: 2, code: 'wrong_type', place: 'model-covariance-nan-row.json:coefficients.covariance[0]', note: 'a covariance row that is a string' });
  add('model-covariance-ragged.json', swap(M, '"covariance": [\n      [\n        0.001,', '"covariance": [\n      [\n        0.001,\n        0,'), { command: 'validate:model', exit: 2, code: 'bad_covariance', place: 'model-covariance-ragged.json:coefficients.covariance', note: 'a covariance row one entry too long' });
  add('model-covariance-negative-variance.json', swap(M, '"covariance": [\n      [\n        0.001,', '"covariance": [\n      [\n        -0.001,'), { command: 'balance-model', exit: 2, code: 'bad_covariance', place: 'model-covariance-negative-variance.json:coefficients.covariance', note: 'a negative variance' });
  add('model-label-long.json', swap(M, '"label": "hostile corpus base model (invented coefficients)"', `"label": "${'x'.repeat(501)}"`), { command: 'validate:model', exit: 2, code: 'out_of_range', place: 'model-label-long.json:label', note: 'a label of 501 characters' });

  // --- 8. The format tag of the wrong type, and documents of another kind.
  for (const [kind, base, tag] of [
    ['lobby', L, 'lagparity/lobby@1'],
    ['model', M, 'lagparity/model@1'],
    ['rules', R, 'lagparity/rules@1'],
    ['lobby-servers', S, 'lagparity/lobby-servers@1'],
    ['plan', P, 'lagparity/playtest-plan@1'],
  ] as const) {
    for (const [name, value] of [
      ['object', `{"tag": "${tag}"}`],
      ['array', `["${tag}"]`],
      ['number', '1'],
    ] as const) {
      add(`format-${name}-${kind}.json`, swap(base, `"format": "${tag}"`, `"format": ${value}`), { command: `validate:${kind}`, exit: 2, code: 'invalid_value', place: `format-${name}-${kind}.json:format`, line: 2, shows: '(a string)', note: `a ${kind} whose format tag is ${name === 'array' ? 'an array' : `an ${name}`.replace('an number', 'a number')}: says a string is expected` });
    }
  }
  for (const [name, value] of [
    ['object', '{"tag": "lagparity/lobby@1"}'],
    ['null', 'null'],
    ['true', 'true'],
    ['constructor', '"constructor"'],
    ['to-string', '"toString"'],
    ['proto', '"__proto__"'],
  ] as const) {
    add(`format-auto-${name}.json`, swap(L, '"format": "lagparity/lobby@1"', `"format": ${value}`), { command: 'validate', exit: 2, code: 'unknown_format', place: `format-auto-${name}.json:format`, note: `validate without --kind, a format tag ${value}` });
  }
  add('wrong-kind-rules-as-model.json', R, { command: 'balance-model', exit: 2, code: 'wrong_kind', place: 'wrong-kind-rules-as-model.json:format', line: 2, issues: 1, shows: 'got a rules file (its `format`', note: 'a rules file given as --model: one issue saying it is a rules file' });
  add('wrong-kind-model-as-rules.json', M, { command: 'balance-rules', exit: 2, code: 'wrong_kind', place: 'wrong-kind-model-as-rules.json:format', line: 2, issues: 1, shows: 'got a model (its `format`', note: 'a model given as --rules' });
  add('wrong-kind-lobby-as-model.json', L, { command: 'balance-model', exit: 2, code: 'wrong_kind', place: 'wrong-kind-lobby-as-model.json:format', line: 2, issues: 1, shows: 'got a lobby (its `format`', note: 'a lobby given as --model' });
  add('wrong-kind-servers-as-lobby.json', S, { command: 'balance', exit: 2, code: 'wrong_kind', place: 'wrong-kind-servers-as-lobby.json:format', line: 2, issues: 1, shows: 'got a server-choice lobby (its `format`', note: 'a server-choice lobby given to balance' });
  add('wrong-kind-lobby-as-servers.json', L, { command: 'choose-server', exit: 2, code: 'wrong_kind', place: 'wrong-kind-lobby-as-servers.json:format', line: 2, issues: 1, shows: 'got a lobby (its `format`', note: 'a lobby given to choose-server' });
  add('wrong-kind-plan-as-rules.json', P, { command: 'audit-rules', exit: 2, code: 'wrong_kind', place: 'wrong-kind-plan-as-rules.json:format', line: 2, issues: 1, shows: 'got a playtest plan (its `format`', note: 'a plan given as the audit rules' });
  add('wrong-kind-model-as-plan.json', M, { command: 'plan-schedule', exit: 2, code: 'wrong_kind', place: 'wrong-kind-model-as-plan.json:format', line: 2, issues: 1, shows: 'got a model (its `format`', note: 'a model given to plan schedule' });
  add('wrong-kind-rules-as-lobby-report.json', R, { command: 'report-lobby', exit: 2, code: 'wrong_kind', place: 'wrong-kind-rules-as-lobby-report.json:format', line: 2, issues: 1, shows: 'got a rules file (its `format`', note: 'a rules file given to report --lobbies: nothing written' });
  add('wrong-kind-model-as-lobby.json', M, { command: 'validate:lobby', exit: 2, code: 'wrong_kind', place: 'wrong-kind-model-as-lobby.json:format', line: 2, issues: 1, shows: 'got a model (its `format`', note: 'validate --kind lobby on a model' });

  // --- 9. Rules messages: ranges, spelling, comments, warnings.
  const rule = (file: string, from: string, to: string, command: string, exit: 0 | 1 | 2, code: string, path: string, marker: string | null, note: string): void => {
    const text = swap(R, from, to);
    add(file, text, { command, exit, code, place: `${file}${path === '' ? '' : `:${path}`}`, ...(marker === null ? {} : { line: lineOf(text, marker) }), note });
  };
  const ruleShows = (file: string, shows: string): void => {
    const index = cases.findIndex((entry) => entry.file === file);
    cases[index] = { ...(cases[index] as HostileCase), shows };
  };
  rule('rules-gap-2.json', '"accepted_gap": 0.02', '"accepted_gap": 2', 'validate:rules', 2, 'out_of_range', 'accepted_gap', '"accepted_gap"', 'accepted_gap 2: the message gives the allowed range');
  rule('rules-gap-negative.json', '"accepted_gap": 0.02', '"accepted_gap": -0.1', 'balance-rules', 2, 'out_of_range', 'accepted_gap', '"accepted_gap"', 'accepted_gap -0.1');
  rule('rules-gap-string.json', '"accepted_gap": 0.02', '"accepted_gap": "2%"', 'validate:rules', 2, 'wrong_type', 'accepted_gap', '"accepted_gap"', 'accepted_gap as "2%"');
  rule('rules-typo-gap.json', '"accepted_gap"', '"acepted_gap"', 'validate:rules', 2, 'unknown_field', 'acepted_gap', '"acepted_gap"', 'acepted_gap: did you mean accepted_gap, with its line');
  rule('rules-typo-cap.json', '"scale_cap"', '"scale_cpa"', 'balance-rules', 2, 'unknown_field', 'scale_cpa', '"scale_cpa"', 'scale_cpa: did you mean scale_cap');
  rule('rules-typo-nested.json', '"fraction": 0.5', '"fractoin": 0.5', 'validate:rules', 2, 'unknown_field', 'soft_cap.fractoin', '"fractoin"', 'soft_cap.fractoin: did you mean fraction, inside an object');
  rule('rules-typo-case.json', '"latency_limit_ms"', '"Latency_Limit_MS"', 'audit-rules', 2, 'unknown_field', 'Latency_Limit_MS', '"Latency_Limit_MS"', 'a key in the wrong case');
  rule('rules-comment-line.json', '"scale_cap": 1.5,', '"scale_cap": 1.5, // the league cap', 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"scale_cap"')}:`, '"scale_cap"', 'a // comment: refused, JSON has no comments');
  rule('rules-comment-block.json', '"scale_floor": 1,', '/* floor */ "scale_floor": 1,', 'balance-rules', 2, 'invalid_json', `${lineOf(R, '"scale_floor"')}:`, '"scale_floor"', 'a /* */ comment');
  rule('rules-comment-hash.json', '"scale_floor": 1,', '# floor\n  "scale_floor": 1,', 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"scale_floor"')}:`, '# floor', 'a # comment');
  rule('rules-floor-0.8.json', '"scale_floor": 1', '"scale_floor": 0.8', 'validate:rules', 0, 'penalising_floor', 'scale_floor', '"scale_floor"', 'scale_floor 0.8: accepted with a warning');
  rule('rules-floor-0.8-balance.json', '"scale_floor": 1', '"scale_floor": 0.8', 'balance-rules', 0, 'penalising_floor', 'scale_floor', '"scale_floor"', 'scale_floor 0.8 through balance: a warning');
  rule('rules-percentile-101.json', '"percentile": 10', '"percentile": 101', 'validate:rules', 2, 'out_of_range', 'latency_estimator.percentile', '"percentile"', 'a percentile of 101');
  rule('rules-spike-zero.json', '"accepted_exploit_gain": 0.01', '"accepted_exploit_gain": 0.01,\n  "spike_fraction": 0', 'audit-rules', 2, 'out_of_range', 'spike_fraction', '"spike_fraction"', 'a spike fraction of 0');
  rule('rules-trailing-comma.json', '"accepted_exploit_gain": 0.01', '"accepted_exploit_gain": 0.01,', 'validate:rules', 2, 'invalid_json', '', null, 'a trailing comma');
  rule('rules-single-quotes.json', '"scale_floor": 1', "'scale_floor': 1", 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"scale_floor"')}:`, "'scale_floor'", 'a key in single quotes');
  rule('rules-nan-literal.json', '"scale_cap": 1.5', '"scale_cap": NaN', 'balance-rules', 2, 'invalid_json', `${lineOf(R, '"scale_cap"')}:`, '"scale_cap"', 'NaN written as a literal');
  rule('rules-infinity-literal.json', '"scale_cap": 1.5', '"scale_cap": Infinity', 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"scale_cap"')}:`, '"scale_cap"', 'Infinity written as a literal');
  rule('rules-hex-number.json', '"latency_limit_ms": 220', '"latency_limit_ms": 0xdc', 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"latency_limit_ms"')}:`, '"latency_limit_ms"', 'a hexadecimal number');
  rule('rules-leading-zero.json', '"latency_limit_ms": 220', '"latency_limit_ms": 0220', 'validate:rules', 2, 'invalid_json', `${lineOf(R, '"latency_limit_ms"')}:`, '"latency_limit_ms"', 'a number with a leading zero');
  rule('rules-ratio-string.json', '"max_scale_ratio": null', '"max_scale_ratio": "1.2"', 'validate:rules', 2, 'wrong_type', 'max_scale_ratio', '"max_scale_ratio"', 'a ratio as a string');
  ruleShows('rules-gap-2.json', 'requires a probability above 0 and at most 1, got 2');
  ruleShows('rules-typo-gap.json', 'did you mean "accepted_gap"');
  ruleShows('rules-typo-cap.json', 'did you mean "scale_cap"');
  ruleShows('rules-typo-nested.json', 'did you mean "fraction"');
  ruleShows('rules-comment-line.json', 'JSON (RFC 8259) has no comments');
  ruleShows('rules-comment-block.json', 'JSON (RFC 8259) has no comments');
  ruleShows('rules-floor-0.8.json', 'a handicap');
  rule('rules-soft-cap-array.json', '"soft_cap": {', '"soft_cap": [], "x": {', 'validate:rules', 2, 'wrong_type', 'soft_cap', '"soft_cap"', 'soft_cap as an array');

  // --- 10. Whole documents that are not documents.
  const whole: [string, string, string, string, string][] = [
    ['empty', '', 'validate', 'empty_file', 'an empty file'],
    ['whitespace', '  \n\t\n ', 'validate', 'empty_file', 'only whitespace'],
    ['null', 'null', 'validate:lobby', 'wrong_type', 'the JSON value null'],
    ['array', '[1, 2]', 'validate:rules', 'wrong_type', 'an array at the top'],
    ['string', '"lagparity/lobby@1"', 'validate:model', 'wrong_type', 'a string at the top'],
    ['number', '42', 'balance', 'wrong_type', 'a number at the top'],
    ['two-documents', '{}\n{}', 'validate', 'invalid_json', 'two JSON documents in one file'],
    ['bom-only', '\ufeff', 'validate', 'empty_file', 'only a UTF-8 byte-order mark'],
    ['unquoted-key', '{format: "lagparity/lobby@1"}', 'validate', 'invalid_json', 'an unquoted key'],
    ['truncated-string', '{"format": "lagparity/lob', 'validate', 'invalid_json', 'a file ending inside a string'],
    ['nul-byte', '{"format"\u0000: 1}', 'validate', 'invalid_json', 'a NUL byte between tokens (named with its place, not as UTF-16)'],
  ];
  for (const [name, text, command, code, note] of whole) {
    add(`whole-${name}.json`, text, { command, exit: 2, code, place: `whole-${name}.json`, note });
  }

  // --- 11. Lobbies and server lobbies at and beyond the documented limits.
  const limitLobby = (players: number, samples: number): string => {
    const base = lobby();
    base.players = Array.from({ length: players }, (_, index) => ({
      id: `p${String(index).padStart(3, '0')}`,
      team: index % 2 === 0 ? 'Tidewater Gulls' : 'Marram Otters',
      latency_ms: samples === 1 ? 15 + (index % 180) : Array.from({ length: samples }, (_, at) => 15 + (index % 180) + ((at * 7) % 11)),
    }));
    return JSON.stringify(base);
  };
  add('limits-lobby-256x64.json', limitLobby(256, 64), { command: 'balance-heavy', exit: 0, code: null, place: null, note: '256 players with 64 samples each (16,384 values, every limit met): balanced within a few seconds' });
  again('limits-lobby-256x64.json', { command: 'audit-heavy', exit: 1, code: null, place: null, note: 'the same lobby audited with pooled samples, a ratio and a budget (the costliest audit): within the time bound' });
  add('limits-lobby-257.json', limitLobby(257, 1), { command: 'balance', exit: 2, code: 'out_of_range', place: 'limits-lobby-257.json:players', note: '257 players: one beyond the limit' });
  add('limits-lobby-4097-samples.json', limitLobby(1, 4097).replace('"players":[', '"players":[{"id":"other","latency_ms":30},'), { command: 'balance', exit: 2, code: 'out_of_range', place: 'limits-lobby-4097-samples.json:players[1].latency_ms', note: '4,097 samples for one player' });
  add('limits-lobby-16385-values.json', limitLobby(5, 3277), { command: 'balance', exit: 2, code: 'too_many_samples', place: 'limits-lobby-16385-values.json:players', note: '16,385 latency values in all' });
  {
    const servers = Array.from({ length: 64 }, (_, index) => `s${String(index).padStart(2, '0')}`);
    const base = serverLobby();
    base.servers = servers;
    base.players = Array.from({ length: 256 }, (_, index) => ({ id: `p${String(index).padStart(3, '0')}`, latency_ms: Object.fromEntries(servers.map((server, at) => [server, 15 + ((index * 7 + at * 13) % 200)])) }));
    add('limits-servers-64x256.json', JSON.stringify(base), { command: 'choose-server-heavy', exit: 0, code: null, place: null, note: '64 servers and 256 players: a server chosen within the time bound' });
    const over = serverLobby();
    over.servers = [...servers, 's64'];
    over.players = (over.players as { id: string }[]).map(({ id }, index) => ({ id, latency_ms: Object.fromEntries([...servers, 's64'].map((server, at) => [server, 15 + ((index * 7 + at * 13) % 200)])) }));
    add('limits-servers-65.json', JSON.stringify(over), { command: 'choose-server', exit: 2, code: 'out_of_range', place: 'limits-servers-65.json:servers', note: '65 servers: one beyond the limit' });
  }
  add('limits-id-129.json', swap(L, '"id": "kestrelby"', `"id": "${'k'.repeat(129)}"`), { command: 'validate:lobby', exit: 2, code: 'out_of_range', place: 'limits-id-129.json:players[0].id', note: 'a player id of 129 characters' });
  add('limits-match-id-257.json', swap(L, '"match_id": "tidewater-s1-w02-gulls-otters"', `"match_id": "${'m'.repeat(257)}"`), { command: 'validate:lobby', exit: 2, code: 'out_of_range', place: 'limits-match-id-257.json:match_id', note: 'a match id of 257 characters' });

  // --- 12. Server lobbies: ids that name Object's properties, missing entries.
  add('servers-named-constructor.json', S.replaceAll('cliff-west', 'constructor'), { command: 'validate', exit: 2, code: 'forbidden_key', place: 'servers-named-constructor.json:players[0].latency_ms.constructor', note: 'a server named constructor: refused as a key' });
  add('servers-named-proto-value.json', swap(S, '"cliff-west"\n  ]', '"cliff-west",\n    "__proto__"\n  ]'), { command: 'choose-server', exit: 2, code: 'missing_server_latency', place: 'servers-named-proto-value.json:players[0].latency_ms', note: 'a server named __proto__ in the list (a value): no player can have a latency to it as a key, so it is missing' });
  add('servers-missing-latency.json', swap(S, '"quay-north": 15,', ''), { command: 'choose-server', exit: 2, code: null, place: 'servers-missing-latency.json:players[0].latency_ms', note: 'a player without a latency to one server' });
  add('servers-named-to-string.json', swap(S, '"cliff-west"\n  ]', '"cliff-west",\n    "toString"\n  ]'), { command: 'choose-server', exit: 2, code: null, place: 'servers-named-to-string.json:players[0].latency_ms', note: 'a server named toString that no player has a latency for: missing, not read from Object.prototype' });

  // --- 13. Session logs.
  {
    const lines = G.split('\n');
    const safePoint = lines.findIndex((line) => line.includes('"safe_point"'));
    const withLine = (index: number, text: string): string => {
      const copy = [...lines];
      copy[index] = text;
      return copy.join('\n');
    };
    add('session-not-json.jsonl', withLine(1, '{"type": "join",'), { command: 'replay', exit: 2, code: 'invalid_json', place: 'session-not-json.jsonl:2', line: 2, note: 'a session log line that is not JSON' });
    add('session-unknown-type.jsonl', withLine(1, '{"type":"explode","at":1}'), { command: 'replay', exit: 2, code: 'invalid_value', place: 'session-unknown-type.jsonl:2', line: 2, note: 'an event of an unknown type' });
    add('session-no-start.jsonl', lines.slice(1).join('\n'), { command: 'replay', exit: 2, code: 'invalid_log', place: 'session-no-start.jsonl:1', line: 1, note: 'a log without its start event' });
    add('session-two-starts.jsonl', [lines[0], ...lines].join('\n'), { command: 'replay', exit: 2, code: 'invalid_log', place: 'session-two-starts.jsonl:2', line: 2, note: 'two start events' });
    add('session-latency-1e308.jsonl', withLine(safePoint, (lines[safePoint] as string).replace(/"latency_ms":[0-9.e+-]+/, '"latency_ms":1e308')), { command: 'replay', exit: 2, code: 'out_of_range', place: `session-latency-1e308.jsonl:${safePoint + 1}`, line: safePoint + 1, note: 'an estimate of 1e308 ms in a safe point' });
    add('session-scale-string.jsonl', withLine(safePoint, (lines[safePoint] as string).replace(/"applied":\{"([a-z]+)":[0-9.e+-]+/, '"applied":{"$1":"1.2"')), { command: 'replay', exit: 2, code: 'wrong_type', place: `session-scale-string.jsonl:${safePoint + 1}`, line: safePoint + 1, note: 'an applied scale written as a string' });
    add('session-invalid-utf8.jsonl', withBytes(G, 'kestrelby', [0x6b, 0xff]), { command: 'replay', exit: 2, code: 'wrong_encoding', place: `session-invalid-utf8.jsonl:${lineOf(G, 'kestrelby')}`, line: lineOf(G, 'kestrelby'), note: 'a byte FF inside an id in the log' });
    add('session-empty.jsonl', '', { command: 'replay', exit: 2, code: null, place: 'session-empty.jsonl', note: 'an empty session log' });
  }

  // --- 14. Plans.
  add('plan-format-array.json', swap(P, '"format": "lagparity/playtest-plan@1"', '"format": ["lagparity/playtest-plan@1"]'), { command: 'plan-schedule', exit: 2, code: 'invalid_value', place: 'plan-format-array.json:format', line: 2, note: 'a plan whose format tag is an array' });
  add('plan-comment.json', swap(P, '"seed": 7', '"seed": 7 // fixed'), { command: 'plan-schedule', exit: 2, code: 'invalid_json', place: `plan-comment.json:${lineOf(P, '"seed"')}:`, line: lineOf(P, '"seed"'), note: 'a plan with a comment' });
  add('plan-typo.json', swap(P, '"participants"', '"participents"'), { command: 'plan-schedule', exit: 2, code: 'unknown_field', place: 'plan-typo.json:participents', line: lineOf(P, '"participants"'), shows: 'did you mean "participants"', note: 'participents: did you mean participants' });
  add('plan-participants-huge.json', swap(P, '"participants": 8', '"participants": 1e9'), { command: 'plan-schedule', exit: 2, code: 'out_of_range', place: 'plan-participants-huge.json:participants', note: 'a billion participants' });
  add('plan-label-control.json', swap(P, '"label": "Tidewater league: hostile corpus plan"', '"label": "Tidewater\\u001b[31m\\u0007 plan"'), { command: 'plan-schedule', exit: 0, code: null, place: null, note: 'a plan label with ESC and BEL: the schedule is written' });

  // --- 15. Size studies given to the report (--size-study).
  add('size-study-lobby.json', L, { command: 'report-size-study', exit: 2, code: 'wrong_kind', place: 'size-study-lobby.json:format', issues: 1, note: 'a lobby given as the size study: one issue, not one per missing field; no report written' });
  add('size-study-deep.json', nestedObjects(10_000, true), { command: 'report-size-study', exit: 2, code: 'too_deep', place: 'size-study-deep.json:1:321', line: 1, note: '10,000 nested objects as the size study' });
  add('size-study-format-number.json', '{\n  "format": 2,\n  "label": null\n}\n', { command: 'report-size-study', exit: 2, code: 'invalid_value', place: 'size-study-format-number.json:format', line: 2, shows: '(a string)', note: 'a size study whose format tag is a number' });
  add('size-study-utf16.json', utf16('{"format": "lagparity/playtest-size@1"}', false, true), { command: 'report-size-study', exit: 2, code: 'wrong_encoding', place: 'size-study-utf16.json', shows: 'got UTF-16 little-endian text', note: 'a size study saved as UTF-16' });

  return { files, cases };
}

/** Writes the corpus into `folder` (removing the files it no longer holds). */
export function writeHostileCorpus(folder: string): HostileCorpus {
  const corpus = hostileCorpus();
  mkdirSync(folder, { recursive: true });
  for (const name of readdirSync(folder)) if (name !== 'README.md' && name !== 'cases.json' && !corpus.files.has(name)) rmSync(join(folder, name));
  for (const [name, bytes] of corpus.files) writeFileSync(join(folder, name), bytes);
  writeFileSync(join(folder, 'cases.json'), `${JSON.stringify(corpus.cases, null, 1)}\n`);
  return corpus;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const corpus = writeHostileCorpus(process.argv[2] ?? join('test', 'fixtures', 'hostile'));
  console.log(`wrote ${corpus.cases.length} cases (${corpus.files.size} files) into ${process.argv[2] ?? 'test/fixtures/hostile'}`);
}
