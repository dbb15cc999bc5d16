/**
 * The benches' generated per-attempt trials (bench:fit, the latency-step
 * measurement): 2,000 players, each at a base latency of 5..205 ms; per-shot
 * latency = the base plus |N(0, 6)| jitter, rounded to 0.01 ms; scale one of
 * 1, 1.25, 1.5, 1.75, 2; difficulty one of three levels; a Bernoulli hit from
 * the five-term logit model of the demo (latency, log scale, difficulty,
 * latency x log scale). Invented data, for benchmarks only.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import { createRandomSource, standardNormalDraw } from '../../src/random.js';

/** Players in every generated file. */
export const PLAYERS = 2000;
const SCALES = [1, 1.25, 1.5, 1.75, 2];
const LEVELS = ['standard', 'veteran', 'elite'];
const LEVEL_EFFECT = [0, -0.5, -1];

/** Write `rows` per-attempt rows (seeded by `seed`: same bytes on every run) to `path`. */
export async function writeAttemptsFile(path: string, rows: number, seed: number): Promise<void> {
  const random = createRandomSource(seed);
  const base = Float64Array.from({ length: PLAYERS }, () => 5 + 200 * random());
  const out = createWriteStream(path);
  out.write('player,latency_ms,scale,difficulty,hit\n');
  let chunk = '';
  for (let i = 0; i < rows; i += 1) {
    const player = Math.floor(random() * PLAYERS);
    const latency = Math.round(((base[player] as number) + 6 * Math.abs(standardNormalDraw(random))) * 100) / 100;
    const scale = SCALES[Math.floor(random() * 5)] as number;
    const level = Math.floor(random() * 3);
    const logScale = Math.log(scale);
    const predictor = 0.9 - 0.008 * latency + 1.6 * logScale + (LEVEL_EFFECT[level] as number) + 0.004 * latency * logScale;
    const hit = random() < 1 / (1 + Math.exp(-predictor)) ? 1 : 0;
    chunk += `g${player},${latency.toFixed(2)},${scale},${LEVELS[level] as string},${hit}\n`;
    if (chunk.length > 1 << 16) {
      if (!out.write(chunk)) await once(out, 'drain');
      chunk = '';
    }
  }
  out.end(chunk);
  await once(out, 'finish');
}
