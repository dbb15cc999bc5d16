/** Spawning the built CLI as a user would. */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
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

/** One case of a batch: what runCli gives, and the case's time and the process's peak memory so far. */
export interface BatchRun extends CliRun {
  status: number;
  /** Wall time of the command, in milliseconds. */
  ms: number;
  /** The batch process's peak resident set after this case, in bytes. */
  maxRss: number;
}

/**
 * Run many CLI invocations of the built bundle in one child process
 * (test/helpers/cli-batch.mjs): about 10 ms a case instead of a 0.25 s process
 * start each. The child runs with --max-old-space-size=2048, so a case that
 * needs more heap ends it, and this throws.
 */
export function runCliBatch(argsList: readonly (readonly string[])[], options: { cwd?: string; timeoutMs?: number } = {}): BatchRun[] {
  const scratch = mkdtempSync(join(tmpdir(), 'lagparity-batch-'));
  const list = join(scratch, 'cases.json');
  writeFileSync(list, JSON.stringify(argsList.map((args) => ({ args }))));
  const run = spawnSync(process.execPath, ['--max-old-space-size=2048', join(ROOT, 'test', 'helpers', 'cli-batch.mjs'), list], {
    cwd: options.cwd ?? ROOT,
    encoding: 'utf8',
    env: { ...process.env, NO_COLOR: '1' },
    maxBuffer: 256 * 1024 * 1024,
    timeout: options.timeoutMs ?? 170_000,
  });
  if (run.status !== 0) throw new Error(`the batch process failed (status ${run.status}, signal ${run.signal}):\n${run.stderr.slice(-4000)}`);
  return JSON.parse(run.stdout) as BatchRun[];
}
