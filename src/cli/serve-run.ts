/** `lagparity serve`, run (options and help: `serve-command.ts`). */
import { type Issue, error, show } from '../issues.js';
import { DEFAULT_LIMITS, type ServiceLimits } from '../service/request-bodies.js';
import { serve } from '../service/serve.js';
import { loadModel, loadRules } from './inputs.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues } from './output.js';
import { escapeControlCharacters } from '../formats/control-characters.js';

export interface ServeCommandOptions {
  model: string;
  rules?: string;
  host: string;
  port: string;
  maxBodyBytes?: string;
  maxPlayers?: string;
  maxSamples?: string;
  maxCandidates?: string;
  requestTimeoutMs?: string;
}

/** A whole number option in [min, max], or its default when not given. */
function integerOption(flag: string, text: string | undefined, fallback: number, min: number, max: number, issues: Issue[]): number {
  if (text === undefined) return fallback;
  const value = /^\d+$/.test(text.trim()) ? Number(text.trim()) : Number.NaN;
  if (!(value >= min && value <= max)) {
    issues.push(error('invalid_option', flag, `\`${flag}\` requires a whole number from ${min} to ${max}, got ${show(text)}`));
    return fallback;
  }
  return value;
}

export async function runServe(options: ServeCommandOptions): Promise<number> {
  const issues: Issue[] = [];
  const port = integerOption('--port', options.port, 8321, 0, 65_535, issues);
  const limits: ServiceLimits = {
    maxBodyBytes: integerOption('--max-body-bytes', options.maxBodyBytes, DEFAULT_LIMITS.maxBodyBytes, 2, DEFAULT_LIMITS.maxBodyBytes, issues),
    maxPlayers: integerOption('--max-players', options.maxPlayers, DEFAULT_LIMITS.maxPlayers, 1, DEFAULT_LIMITS.maxPlayers, issues),
    maxSamples: integerOption('--max-samples', options.maxSamples, DEFAULT_LIMITS.maxSamples, 1, DEFAULT_LIMITS.maxSamples, issues),
    maxCandidates: integerOption('--max-candidates', options.maxCandidates, DEFAULT_LIMITS.maxCandidates, 1, DEFAULT_LIMITS.maxCandidates, issues),
    requestTimeoutMs: integerOption('--request-timeout-ms', options.requestTimeoutMs, DEFAULT_LIMITS.requestTimeoutMs, 100, 3_600_000, issues),
  };
  if (options.host.trim() === '') issues.push(error('invalid_option', '--host', '`--host` requires an address such as 127.0.0.1, got an empty one'));
  const [model, rules] = await Promise.all([loadModel(options.model), loadRules(options.rules)]);
  if (!model.ok) issues.push(...model.issues);
  if (!rules.ok) issues.push(...rules.issues);
  if (issues.length > 0 || !model.ok || !rules.ok) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  let started: Awaited<ReturnType<typeof serve>>;
  try {
    started = await serve({ modelPath: options.model, model: model.value, rules: rules.value, host: options.host, port, limits, version: '0.1.0' });
  } catch (cause) {
    const code = (cause as NodeJS.ErrnoException).code;
    const reason = code === 'EADDRINUSE' ? 'the port is in use' : code === 'EACCES' ? 'permission denied (ports below 1024 need privileges)' : code === 'EADDRNOTAVAIL' || code === 'ENOTFOUND' ? 'no such address on this machine' : (cause as Error).message;
    reportIssues([error('cannot_listen', `${options.host}:${port}`, `the service requires an address and port it can listen on, got ${reason}`)]);
    return EXIT_BAD_INPUT;
  }
  process.stderr.write(escapeControlCharacters(`lagparity serve: listening on ${started.url} (model ${options.model})\n`));
  await new Promise<void>((resolve) => {
    const wait = () => {
      process.off('SIGTERM', wait);
      process.off('SIGINT', wait);
      // serve.ts handles the signal too: wait until it has drained.
      void started.stop().then(resolve);
    };
    process.on('SIGTERM', wait);
    process.on('SIGINT', wait);
  });
  return EXIT_OK;
}
