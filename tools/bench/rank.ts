/**
 * `npm run bench:rank`: candidate lobbies ranked per second (issue 16's target:
 * at least 1 million player-evaluations a second). A pool of 200 queued
 * players with 16 latency samples each (the league's p10 estimator) or one
 * latency each; 2,000 candidate 5v5 lobbies drawn from it (seeded); the
 * league's model and rules. Each figure is the best and the median of five
 * rounds two seconds apart (the machine's speed moves from minute to minute).
 * Runs as a bundle with plain node (tools/bench/run-bundled.ts).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { createRandomSource } from '../../src/random.js';
import { rankLobbies } from '../../src/solver/rank-lobbies.js';
import type { LobbyFile } from '../../src/formats/lobby-types.js';

const root = join(import.meta.dirname, '..', '..');
const model = compileModel(JSON.parse(readFileSync(join(root, 'matches', 'model.json'), 'utf8')));
const rules = compileRules(JSON.parse(readFileSync(join(root, 'matches', 'league-rules.json'), 'utf8')));
if (!model.ok || !rules.ok) throw new Error('the demo model and rules must compile');

const pause = (milliseconds: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, milliseconds);
const lines = ['rankLobbies: 2,000 candidate 5v5 lobbies from a pool of 200 queued players, league model and rules'];
for (const samples of [16, 1]) {
  const random = createRandomSource(1602);
  const pool: LobbyFile = {
    format: 'lagparity/lobby@1',
    match_id: 'queue',
    attribute: 'hit_area',
    difficulty: 'veteran',
    players: Array.from({ length: 200 }, (_, index) => {
      const base = 10 + 180 * random();
      return { id: `queued-${index}`, team: index % 2 === 0 ? 'red' : 'blue', latency_ms: samples === 1 ? base : Array.from({ length: samples }, () => base + 25 * random() ** 3) };
    }),
  };
  const candidates = Array.from({ length: 2000 }, () => {
    const chosen = new Set<string>();
    while (chosen.size < 10) chosen.add(`queued-${Math.floor(random() * 200)}`);
    return [...chosen];
  });
  for (let warm = 0; warm < 3; warm += 1) rankLobbies(pool, candidates, model.value, rules.value);
  const rates: number[] = [];
  for (let round = 0; round < 5; round += 1) {
    if (round > 0) pause(2000);
    const start = process.hrtime.bigint();
    const ranking = rankLobbies(pool, candidates, model.value, rules.value);
    const seconds = Number(process.hrtime.bigint() - start) / 1e9;
    if (ranking.status !== 'ranked') throw new Error('the bench pool was rejected');
    rates.push((candidates.length * 10) / seconds);
  }
  rates.sort((left, right) => right - left);
  const millions = (value: number) => (value / 1e6).toFixed(2);
  lines.push(`  ${samples === 1 ? 'one latency a player   ' : '16 samples a player, p10'}: ${millions(rates[0] as number)} M player-evaluations/s best round, ${millions(rates[2] as number)} M median round   (target >= 1 M)`);
}
process.stdout.write(`${lines.join('\n')}\n`);
