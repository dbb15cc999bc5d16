/**
 * `npm run fuzz:solver [-- --lobbies 100000 --seed 14 --max-players 128]`:
 * the solver's documented invariants (test/solver/invariants.ts) on random
 * lobbies from a seeded source. Prints how many lobbies checked each
 * invariant and how many broke it, what the answers exercised (labels, a
 * binding budget, a ratio's lift, rejections), the first few violations in
 * full, and exits 1 if any invariant broke. CI runs a seeded slice of 2,000
 * (test/solver/fuzz-slice.test.ts).
 */
import { createRandomSource } from '../src/random.js';
import { INVARIANTS, checkInvariants, randomCase } from '../test/solver/invariants.js';

function option(name: string, fallback: number): number {
  const at = process.argv.indexOf(`--${name}`);
  if (at < 0) return fallback;
  const value = Number(process.argv[at + 1]);
  if (!Number.isSafeInteger(value) || value < 1) {
    process.stderr.write(`--${name} requires a positive whole number, got ${String(process.argv[at + 1])}\n`);
    process.exit(2);
  }
  return value;
}

const lobbies = option('lobbies', 100_000);
const seed = option('seed', 14);
const maxPlayers = option('max-players', 128);
const random = createRandomSource(seed);
const checked = new Map<string, number>();
const broken = new Map<string, number>();
const kinds = new Map<string, number>();
const features = new Map<string, number>();
const examples: string[] = [];
const bump = (map: Map<string, number>, key: string) => map.set(key, (map.get(key) ?? 0) + 1);
const started = Date.now();
for (let index = 0; index < lobbies; index += 1) {
  const drawn = randomCase(random, maxPlayers);
  const keys = index % 10 === 0 ? drawn.lobby.players.map(() => random()) : null;
  const outcome = checkInvariants(drawn, keys);
  bump(kinds, outcome.kind);
  for (const feature of outcome.features) bump(features, feature);
  for (const invariant of outcome.checked) bump(checked, invariant);
  for (const failure of outcome.broken) {
    bump(broken, failure.invariant);
    if (examples.length < 5) examples.push(`${failure.invariant}: ${failure.note}\n  case ${JSON.stringify(drawn)}`);
  }
}
const lines = [`solver fuzz: ${lobbies.toLocaleString('en-US')} lobbies of 1-${maxPlayers} players, seed ${seed}, ${((Date.now() - started) / 1000).toFixed(1)} s`, '', 'invariant         lobbies checked   violations'];
for (const invariant of INVARIANTS) lines.push(`${invariant.padEnd(16)}  ${String(checked.get(invariant) ?? 0).padStart(15)}   ${String(broken.get(invariant) ?? 0).padStart(10)}`);
lines.push('', 'lobbies by answer: ' + [...kinds.entries()].sort().map(([kind, count]) => `${kind} ${count}`).join(', '));
lines.push('lobbies exercising: ' + [...features.entries()].sort().map(([feature, count]) => `${feature} ${count}`).join(', '));
if (examples.length > 0) lines.push('', 'first violations:', ...examples);
process.stdout.write(`${lines.join('\n')}\n`);
process.exit(broken.size === 0 ? 0 : 1);
