/* global process, Buffer, performance */
// Runs many CLI invocations of the built bundle in one Node process, as the
// user's shell would run them one by one, without paying a process start
// (about 0.25 s here) per case: for each case it sets process.argv, captures
// what the command writes to stdout and stderr, and imports
// dist/bin/lagparity.js afresh (a new query string is a new module instance,
// so commander parses again; the commands' lazy chunks are shared, as they are
// pure apart from the files they read and write). main.ts awaits the command at
// its top level, so the import settles when the command has finished.
//
// Input: the path of a JSON file holding [{ args: string[] }]. Output on
// stdout: one JSON array of { status, stdout, stderr, ms, heapUsed, maxRss }
// per case, in order. Run it with --max-old-space-size=2048: a case that
// needs more heap ends the process (the test then fails), and maxRss (the
// process's peak resident set so far, in bytes) bounds every case before it.
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const bundle = pathToFileURL(join(root, 'dist', 'bin', 'lagparity.js')).href;
const cases = JSON.parse(readFileSync(process.argv[2], 'utf8'));
const realWrite = process.stdout.write.bind(process.stdout);
const results = [];

for (const [index, entry] of cases.entries()) {
  let stdout = '';
  let stderr = '';
  const saved = { out: process.stdout.write, err: process.stderr.write, argv: process.argv };
  process.stdout.write = (chunk) => {
    stdout += typeof chunk === 'string' ? chunk : Buffer.from(chunk).toString('utf8');
    return true;
  };
  process.stderr.write = (chunk) => {
    stderr += typeof chunk === 'string' ? chunk : Buffer.from(chunk).toString('utf8');
    return true;
  };
  process.argv = [process.execPath, fileURLToPath(bundle), ...entry.args];
  process.exitCode = undefined;
  const started = performance.now();
  let thrown = null;
  try {
    await import(`${bundle}?case=${index}`);
  } catch (cause) {
    thrown = String(cause?.stack ?? cause);
  }
  const ms = performance.now() - started;
  process.stdout.write = saved.out;
  process.stderr.write = saved.err;
  process.argv = saved.argv;
  const status = process.exitCode ?? 0;
  process.exitCode = undefined;
  results.push({ status, stdout, stderr: thrown === null ? stderr : `${stderr}\nthrown out of the CLI: ${thrown}`, ms, heapUsed: process.memoryUsage().heapUsed, maxRss: process.resourceUsage().maxRSS * 1024 });
}

realWrite(JSON.stringify(results));
