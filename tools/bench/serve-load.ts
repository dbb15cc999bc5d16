/**
 * `npm run bench:serve`: `lagparity serve` under load (issue 17's goal: zero
 * errors, at least half the throughput of a bare Node http server answering
 * the same-size canned JSON, p99 <= 10 ms), with autocannon as the load
 * generator, and a soak run with the server's memory sampled.
 *
 * Shape: 200 different 10-player lobbies (two teams, 16 latency samples per
 * player, the league's rules, so the p10 estimator works), posted in turn to
 * POST /v1/balance over 32 connections for 10 s. The bare server runs in a
 * child process of its own like the service, reads each body whole and
 * answers a canned balance document of the same size. The two are measured
 * in the same run, one after the other; this process runs only the load
 * generator (one core each on this two-core machine).
 *
 * Usage: npm run bench:serve [-- --seconds 10] [-- --soak 60]
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import autocannon from 'autocannon';
import { createRandomSource } from '../../src/random.js';

const root = join(import.meta.dirname, '..', '..');
const argument = (name: string, fallback: number) => {
  const at = process.argv.indexOf(`--${name}`);
  return at >= 0 ? Number(process.argv[at + 1]) : fallback;
};
const seconds = argument('seconds', 10);
const soak = argument('soak', 0);
const connections = 32;

const random = createRandomSource(1701);
const bodies = Array.from({ length: 200 }, (_, lobby) =>
  JSON.stringify({
    lobby: {
      format: 'lagparity/lobby@1',
      match_id: `bench-${lobby}`,
      attribute: 'hit_area',
      difficulty: 'veteran',
      players: Array.from({ length: 10 }, (_, index) => {
        const base = 8 + 160 * random();
        return { id: `p${index}`, team: index < 5 ? 'red' : 'blue', latency_ms: Array.from({ length: 16 }, () => Math.round((base + 20 * random() ** 3) * 10) / 10) };
      }),
    },
  }),
);

function waitForUrl(child: ChildProcess): Promise<string> {
  return new Promise((resolve, reject) => {
    let text = '';
    child.stderr?.setEncoding('utf8').on('data', (chunk: string) => {
      text += chunk;
      const found = /http:\/\/[^\s]+/.exec(text);
      if (found) resolve(found[0]);
    });
    child.on('exit', (code) => reject(new Error(`exited ${String(code)}: ${text}`)));
  });
}

const BARE_SERVER = `
const http = require('node:http');
const canned = Buffer.from(process.env.CANNED);
const server = http.createServer((request, response) => {
  const chunks = [];
  request.on('data', (chunk) => chunks.push(chunk));
  request.on('end', () => {
    JSON.parse(Buffer.concat(chunks).toString('utf8'));
    response.writeHead(200, { 'content-type': 'application/json', 'content-length': canned.length });
    response.end(canned);
  });
});
server.keepAliveTimeout = 72000;
server.listen(0, '127.0.0.1', () => process.stderr.write('bare server on http://127.0.0.1:' + server.address().port + '\\n'));
`;

/** User + system CPU seconds a process has used (/proc/PID/stat, clock ticks of 1/100 s). */
function cpuSeconds(pid: number): number {
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').replace(/^.*\) /, '').split(' ');
  return (Number(fields[11]) + Number(fields[12])) / 100;
}

function rssMiB(pid: number): number {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  return Number(/VmRSS:\s+(\d+)/.exec(status)?.[1] ?? 0) / 1024;
}

/** The load, and the CPU the server spent on each answer (robust to a busy machine, unlike requests a second). */
async function measured(url: string, pid: number, duration: number): Promise<autocannon.Result & { cpuMicroseconds: number }> {
  const before = cpuSeconds(pid);
  const result = await load(url, duration);
  return { ...result, cpuMicroseconds: ((cpuSeconds(pid) - before) / result.requests.total) * 1e6 };
}

async function load(url: string, duration: number): Promise<autocannon.Result> {
  let next = 0;
  return autocannon({
    url: `${url}/v1/balance`,
    connections,
    duration,
    requests: [
      {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        setupRequest: (request) => ({ ...request, body: bodies[next++ % bodies.length] }),
      },
    ],
  });
}

function line(name: string, result: autocannon.Result & { cpuMicroseconds: number }): string {
  const failures = result.errors + result.timeouts + result.non2xx;
  return `  ${name.padEnd(22)} ${result.requests.average.toFixed(0).padStart(7)} req/s   p50 ${String(result.latency.p50).padStart(3)} ms   p99 ${String(result.latency.p99).padStart(3)} ms   server CPU ${result.cpuMicroseconds.toFixed(0).padStart(4)} us/request   errors ${failures} (of ${result.requests.total})`;
}

const service = spawn(process.execPath, [join(root, 'dist', 'bin', 'lagparity.js'), 'serve', '--model', join(root, 'matches', 'model.json'), '--rules', join(root, 'matches', 'league-rules.json'), '--port', '0'], { stdio: ['ignore', 'ignore', 'pipe'] });
try {
  const url = await waitForUrl(service);
  const sample = await fetch(`${url}/v1/balance`, { method: 'POST', body: bodies[0] });
  const canned = await sample.text();
  if (sample.status !== 200) throw new Error(`the service answered ${sample.status}: ${canned}`);
  const bare = spawn(process.execPath, ['-e', BARE_SERVER], { stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, CANNED: canned } });
  try {
    const bareUrl = await waitForUrl(bare);
    await load(url, 2); // warm-up
    await load(bareUrl, 2);
    const served = await measured(url, service.pid as number, seconds);
    const plain = await measured(bareUrl, bare.pid as number, seconds);
    const ratio = served.requests.average / plain.requests.average;
    const cpuRatio = plain.cpuMicroseconds / served.cpuMicroseconds;
    process.stdout.write(
      [
        `lagparity serve, POST /v1/balance: 10-player lobbies with 16 samples a player, ${connections} connections, ${seconds} s each (autocannon; answer ${canned.length} bytes)`,
        line('lagparity serve', served),
        line('bare node http', plain),
        `  throughput ratio ${ratio.toFixed(2)} (goal >= 0.5; by server CPU a request ${cpuRatio.toFixed(2)}); service p99 ${served.latency.p99} ms (goal <= 10 ms); service errors ${served.errors + served.timeouts + served.non2xx} (goal 0)`,
        `  machine load average while measuring: ${loadavg()[0]?.toFixed(2)} (2 cores; the figures mean little above about 2)`,
      ].join('\n') + '\n',
    );
  } finally {
    bare.kill();
  }
  if (soak > 0) {
    const samples: number[] = [];
    const timer = setInterval(() => samples.push(rssMiB(service.pid as number)), 1000);
    const result = await load(url, soak);
    clearInterval(timer);
    const settled = samples[Math.min(9, samples.length - 1)] as number;
    const end = samples.at(-1) as number;
    process.stdout.write(
      `  soak ${soak} s: ${result.requests.total} requests, errors ${result.errors + result.timeouts + result.non2xx}; service RSS ${settled.toFixed(1)} MiB at 10 s, ${end.toFixed(1)} MiB at the end, ` +
        `max ${Math.max(...samples).toFixed(1)} MiB: growth ${(((end - settled) / settled) * 100).toFixed(1)}% (goal <= 10%)\n`,
    );
  }
} finally {
  service.kill();
}
