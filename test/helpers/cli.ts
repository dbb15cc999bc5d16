/** Spawning the built CLI as a user would. */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { ROOT } from './demo.js';

export interface CliRun {
  status: number | null;
  stdout: string;
  stderr: string;
}

export function runCli(args: readonly string[], options: { input?: string; env?: Record<string, string> } = {}): CliRun {
  const result = spawnSync(process.execPath, [join(ROOT, 'dist', 'bin', 'lagparity.js'), ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    input: options.input ?? '',
    env: { ...process.env, NO_COLOR: '1', ...options.env },
    maxBuffer: 64 * 1024 * 1024,
  });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}
