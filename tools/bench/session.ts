/**
 * `npm run bench:session`: the cost of one latency sample in a running match
 * (issue 16's target: at most 2 us a sample), and of a safe point.
 *
 * Shape: a 100-player match (the league model and rules, p10 estimator
 * irrelevant here: the session feeds point SRTTs), samples drawn beforehand
 * (seeded: each player's base latency plus cubed-uniform jitter, so the timed
 * loop does no random work) and fed round-robin over the players as a game
 * server's packet loop would, 2,000,000 samples a round. Safe points: a
 * 100-player balance plus the move, 200 a round. Each figure is the best and
 * the median of five rounds two seconds apart (the machine's speed moves
 * from minute to minute). Runs as a bundle with plain node
 * (tools/bench/run-bundled.ts).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { compileModel } from '../../src/model/compile.js';
import { compileRules } from '../../src/solver/rules.js';
import { createRandomSource } from '../../src/random.js';
import { MatchSession } from '../../src/session/match-session.js';

const root = join(import.meta.dirname, '..', '..');
const model = compileModel(JSON.parse(readFileSync(join(root, 'matches', 'model.json'), 'utf8')));
const rules = compileRules(JSON.parse(readFileSync(join(root, 'matches', 'league-rules.json'), 'utf8')));
if (!model.ok || !rules.ok) throw new Error('the demo model and rules must compile');

const PLAYERS = 100;
const SAMPLES = 2_000_000;
const SAFE_POINTS = 200;
const random = createRandomSource(1604);
const ids = Array.from({ length: PLAYERS }, (_, index) => `player-${index}`);
const base = ids.map(() => 10 + 180 * random());
const values = new Float64Array(SAMPLES);
for (let index = 0; index < SAMPLES; index += 1) values[index] = (base[index % PLAYERS] as number) + 25 * random() ** 3;

let events = 0;
const session = new MatchSession(model.value, rules.value, { match_id: 'bench', attribute: 'hit_area', difficulty: 'veteran' }, { record: () => (events += 1) });
ids.forEach((id, index) => session.join(id, index % 2 === 0 ? 'red' : 'blue'));

function feed(): number {
  let accepted = 0;
  for (let index = 0; index < SAMPLES; index += 1) if (session.sample(ids[index % PLAYERS] as string, values[index] as number)) accepted += 1;
  return accepted;
}
function safePoints(): void {
  for (let index = 0; index < SAFE_POINTS; index += 1) {
    session.sample(ids[index % PLAYERS] as string, 400); // something to decide each time
    session.safePoint(index);
  }
}

for (let warm = 0; warm < 3; warm += 1) {
  feed();
  safePoints();
}
const pause = (milliseconds: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, milliseconds);
const perSample: number[] = [];
const perSafePoint: number[] = [];
for (let round = 0; round < 5; round += 1) {
  if (round > 0) pause(2000);
  let start = process.hrtime.bigint();
  const accepted = feed();
  perSample.push(Number(process.hrtime.bigint() - start) / SAMPLES);
  if (accepted !== SAMPLES) throw new Error(`${SAMPLES - accepted} samples were refused`);
  start = process.hrtime.bigint();
  safePoints();
  perSafePoint.push(Number(process.hrtime.bigint() - start) / SAFE_POINTS / 1000);
}
perSample.sort((left, right) => left - right);
perSafePoint.sort((left, right) => left - right);
process.stdout.write(
  [
    `MatchSession: ${PLAYERS} players, league model and rules, ${(SAMPLES / 1e6).toFixed(0)} M samples and ${SAFE_POINTS} safe points a round (${events} events recorded)`,
    `  sample():    ${(perSample[0] as number).toFixed(1)} ns best round, ${(perSample[2] as number).toFixed(1)} ns median round   (target <= 2000 ns)`,
    `  safePoint(): ${(perSafePoint[0] as number).toFixed(1)} us best round, ${(perSafePoint[2] as number).toFixed(1)} us median round (a ${PLAYERS}-player balance and the move; no target)`,
  ].join('\n') + '\n',
);
