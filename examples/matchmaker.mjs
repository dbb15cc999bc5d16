// A matchmaker's whole flow with lagparity, on the demo league's model and rules:
//   1. rank candidate lobbies drawn from the queue,
//   2. choose the server for the best one,
//   3. run the match: feed latency samples as they arrive, bring the scales up
//      to date at each round start, and keep the session's event log.
// Run it after `npm run build` (or with lagparity installed):
//   node examples/matchmaker.mjs [LOG]
// then replay the log it wrote:
//   npx lagparity replay LOG --model matches/model.json
// Everything here (the queue, the players, the servers) is invented; the
// latency samples are simulated from a fixed seed, so every run prints the same.
import { existsSync, mkdtempSync, openSync, readFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  MatchSession,
  chooseServer,
  compileModel,
  compileRules,
  createRandomSource,
  lobbyOnServer,
  rankLobbies,
  safeParseServerLobby,
  standardNormalDraw,
} from 'lagparity';

const readJson = (name) => JSON.parse(readFileSync(new URL(`../matches/${name}`, import.meta.url), 'utf8'));
const model = compileModel(readJson('model.json'), 'model.json');
const rules = compileRules(readJson('league-rules.json'), 'league-rules.json');
if (!model.ok || !rules.ok) throw new Error('the demo model and rules must load');

// The queue: ten players of the Harbourline league waiting for a six-player
// free-for-all, each measured (server-side) to the three servers of the region.
const servers = ['harbour-east', 'midland-central', 'reach-west'];
const measured = {
  saltreed: [12, 44, 91], larkspire: [19, 40, 85], cobblewyn: [64, 31, 52], fenmarch: [88, 47, 23],
  oakhollow: [25, 37, 78], tidewell: [140, 96, 41], emberlock: [33, 29, 70], gullhaven: [71, 35, 46],
  rushmere: [205, 150, 98], pikestone: [16, 52, 104],
};
const queue = safeParseServerLobby({
  format: 'lagparity/lobby-servers@1',
  match_id: 'harbourline-arena-2291',
  attribute: 'hit_area',
  difficulty: 'veteran',
  servers,
  players: Object.entries(measured).map(([id, latencies]) => ({ id, latency_ms: Object.fromEntries(servers.map((server, index) => [server, latencies[index]])) })),
}, 'queue');
if (!queue.ok) throw new Error(queue.issues.map((issue) => issue.message).join('\n'));

// 1. Candidate lobbies, as the matchmaker's own grouping proposes them, ranked
//    on the central server (the region's default) by what compensation cannot remove.
const candidates = [
  ['saltreed', 'larkspire', 'cobblewyn', 'fenmarch', 'oakhollow', 'tidewell'],
  ['saltreed', 'larkspire', 'oakhollow', 'emberlock', 'gullhaven', 'pikestone'],
  ['cobblewyn', 'fenmarch', 'tidewell', 'emberlock', 'gullhaven', 'rushmere'],
];
const ranking = rankLobbies(lobbyOnServer(queue.value, 'midland-central'), candidates, model.value, rules.value);
if (ranking.status !== 'ranked') throw new Error(ranking.issues.map((issue) => issue.message).join('\n'));
console.log('candidate lobbies, fairest first:');
for (const figures of ranking.ranked) {
  console.log(`  #${figures.candidate + 1}  worst gap ${figures.worst_gap?.toFixed(3)}  Jain ${figures.jain?.toFixed(4)}  mean ${figures.mean_latency_ms?.toFixed(1)} ms  ineligible: ${figures.ineligible.join(', ') || 'none'}`);
}
const chosenIds = candidates[ranking.ranked[0].candidate];

// 2. The server for the chosen lobby.
const lobby = { ...queue.value, players: queue.value.players.filter((player) => chosenIds.includes(player.id)) };
const choice = chooseServer(lobby, model.value, rules.value);
if (choice.status !== 'chosen') throw new Error(choice.reason);
console.log(`server: ${choice.server} (${choice.reason})`);

// 3. The match. The log is append-only JSON lines, one event a line; the
//    logger receives structured events (here warnings and errors go to stderr).
const logPath = process.argv[2] ?? join(mkdtempSync(join(tmpdir(), 'lagparity-example-')), 'session.jsonl');
if (existsSync(logPath)) {
  console.error(`${logPath}: exists; give a new path for the session log (nothing was written)`);
  process.exit(2);
}
const log = openSync(logPath, 'wx');
const logger = { info() {}, warn: (object, message) => console.error('warn:', message, object), error: (object, message) => console.error('error:', message, object) };
const session = new MatchSession(model.value, rules.value, { match_id: lobby.match_id, attribute: lobby.attribute, difficulty: lobby.difficulty }, {
  deadband: 0.02,
  maxStep: 0.1,
  logger,
  record: (event) => writeSync(log, `${JSON.stringify(event)}\n`),
});
for (const id of chosenIds) session.join(id);

const random = createRandomSource(2291);
const base = Object.fromEntries(chosenIds.map((id) => [id, measured[id][servers.indexOf(choice.server)]]));
console.log(`round  ${chosenIds.map((id) => id.padStart(9)).join(' ')}  decision`);
for (let round = 1; round <= 8; round += 1) {
  const at = round * 90_000; // milliseconds into the match
  if (round === 5) session.leave('emberlock', at - 60_000); // a dropped connection...
  if (round === 6) session.join('emberlock', null, at - 60_000); // ...and a reconnect (a new estimate)
  const playing = chosenIds.filter((id) => round !== 5 || id !== 'emberlock');
  // 90 seconds of play before this round starts: ten samples a second per player.
  for (let tick = 0; tick < 900; tick += 1) {
    for (const id of playing) {
      const worse = id === 'saltreed' && round >= 4 ? 70 : 0; // saltreed's route degrades mid-match
      session.sample(id, Math.max(1, base[id] + worse + 4 * standardNormalDraw(random)));
    }
  }
  const event = session.safePoint(at); // round start: the only moment scales change
  console.log(`${String(round).padStart(5)}  ${chosenIds.map((id) => session.scale(id).toFixed(3).padStart(9)).join(' ')}  ${event.decision}`);
}
console.log(`session log: ${logPath}`);
