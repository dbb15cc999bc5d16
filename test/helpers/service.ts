/** Starting the built CLI's `serve` as an operator would, on a free port, and speaking HTTP to it. */
import { type ChildProcessWithoutNullStreams, spawn } from 'node:child_process';
import { join } from 'node:path';
import { ROOT } from './demo.js';

export interface RunningService {
  readonly url: string;
  readonly child: ChildProcessWithoutNullStreams;
  stdout(): string;
  stderr(): string;
  /** Resolves with the exit code once the process has ended. */
  readonly exited: Promise<number | null>;
  kill(signal?: NodeJS.Signals): void;
}

export async function startService(args: readonly string[]): Promise<RunningService> {
  const child = spawn(process.execPath, [join(ROOT, 'dist', 'bin', 'lagparity.js'), 'serve', '--port', '0', ...args], { cwd: ROOT, env: { ...process.env, NO_COLOR: '1' } });
  let out = '';
  let err = '';
  child.stdout.setEncoding('utf8').on('data', (chunk: string) => (out += chunk));
  child.stderr.setEncoding('utf8').on('data', (chunk: string) => (err += chunk));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`serve did not start: ${err}`)), 15_000);
    const look = () => {
      const found = /http:\/\/[^\s]+/.exec(err);
      if (found) {
        clearTimeout(timer);
        resolve(found[0]);
      }
    };
    child.stderr.on('data', look);
    void exited.then((code) => {
      clearTimeout(timer);
      reject(new Error(`serve exited ${String(code)} before listening: ${err}`));
    });
  });
  return { url, child, stdout: () => out, stderr: () => err, exited, kill: (signal = 'SIGTERM') => child.kill(signal) };
}

export async function post(url: string, body: string, headers: Record<string, string> = { 'content-type': 'application/json' }): Promise<{ status: number; text: string; headers: Headers }> {
  const response = await fetch(url, { method: 'POST', body, headers });
  return { status: response.status, text: await response.text(), headers: response.headers };
}
