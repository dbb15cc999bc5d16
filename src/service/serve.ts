/**
 * `lagparity serve`'s process: load the model, listen, and handle the
 * signals an orchestrator sends.
 *
 * - Ready: the model is loaded before the port opens, so `/readyz` answers
 *   200 from the first request.
 * - SIGTERM (and SIGINT): `/readyz` turns 503, the listener stops accepting,
 *   requests in flight are answered, idle keep-alive connections closed, then
 *   the process exits 0.
 * - SIGHUP: the model file is read and compiled again; only a model that
 *   compiles replaces the old one, in one assignment between requests (a
 *   request is answered wholly by one model). A bad file keeps the old model
 *   and logs the error (stderr).
 * - Logs: one JSON line per request on stdout (pino); the service's own
 *   events (listening, reloads, draining, errors) as JSON lines on stderr.
 */
import pino from 'pino';
import { type Issue, formatIssue } from '../issues.js';
import { readJsonFile } from '../io/read-json.js';
import { type CompiledModel, compileModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { type ServiceLimits } from './request-bodies.js';
import { type ServiceState, buildService } from './service-app.js';
import { createMetrics } from './service-metrics.js';

export interface ServeOptions {
  readonly modelPath: string;
  readonly model: CompiledModel;
  readonly rules: CompiledRules;
  readonly host: string;
  readonly port: number;
  readonly limits: ServiceLimits;
  readonly version: string;
}

async function loadModelFile(path: string): Promise<{ ok: true; model: CompiledModel } | { ok: false; issues: readonly Issue[] }> {
  const read = await readJsonFile(path);
  if (!read.ok) return { ok: false, issues: read.issues };
  const compiled = compileModel(read.value, read.file);
  return compiled.ok ? { ok: true, model: compiled.value } : { ok: false, issues: compiled.issues };
}

/** The URL a client uses for `host` and `port` (IPv6 addresses in brackets). */
export function serviceUrl(host: string, port: number): string {
  return `http://${host.includes(':') ? `[${host}]` : host}:${port}`;
}

/** Start the service; resolves once it listens, with its URL and a way to stop it as SIGTERM does. */
export async function serve(options: ServeOptions): Promise<{ url: string; stop: () => Promise<void> }> {
  // Request lines are buffered (a write a line cost about a seventh of the
  // service's time under load) and flushed at 4 KiB or every 200 ms.
  const requestDestination = pino.destination({ dest: 1, sync: false, minLength: 4096 });
  let pending = false;
  const flusher = setInterval(() => {
    if (!pending) return;
    pending = false;
    requestDestination.flush();
  }, 200);
  flusher.unref();
  const streamWrite = (line: string) => {
    pending = true;
    return line;
  };
  const requestLog = pino({ base: undefined, timestamp: pino.stdTimeFunctions.isoTime, hooks: { streamWrite } }, requestDestination);
  const errorLog = pino({ base: undefined, timestamp: pino.stdTimeFunctions.isoTime }, pino.destination({ dest: 2, sync: true }));
  const state: ServiceState = { model: options.model, rules: options.rules, ready: true, draining: false };
  const metrics = createMetrics();
  const app = buildService({ state, limits: options.limits, metrics, requestLog, errorLog, version: options.version });
  await app.listen({ host: options.host, port: options.port });
  const address = app.server.address();
  const port = typeof address === 'object' && address !== null ? address.port : options.port;
  const url = serviceUrl(options.host, port);

  let stopping: Promise<void> | undefined;
  const stop = (): Promise<void> => {
    stopping ??= (async () => {
      state.draining = true;
      errorLog.info({ event: 'draining' }, 'SIGTERM: not accepting new connections; answering requests in flight');
      await app.close();
      clearInterval(flusher);
      requestDestination.flushSync();
      errorLog.info({ event: 'stopped' }, 'stopped');
      process.off('SIGTERM', onTerm);
      process.off('SIGINT', onTerm);
      process.off('SIGHUP', onHup);
    })();
    return stopping;
  };
  const onTerm = () => void stop();
  let reloading = false;
  const onHup = () => {
    if (reloading) return;
    reloading = true;
    void loadModelFile(options.modelPath)
      .then((loaded) => {
        if (loaded.ok) {
          state.model = loaded.model;
          metrics.reloads.inc({ result: 'loaded' });
          errorLog.info({ event: 'model_reloaded', model: options.modelPath }, 'SIGHUP: model reloaded');
        } else {
          metrics.reloads.inc({ result: 'kept_old' });
          errorLog.error({ event: 'model_reload_failed', model: options.modelPath, issues: loaded.issues.map(formatIssue) }, 'SIGHUP: the model file does not load; the old model stays');
        }
      })
      .finally(() => {
        reloading = false;
      });
  };
  process.on('SIGTERM', onTerm);
  process.on('SIGINT', onTerm);
  process.on('SIGHUP', onHup);
  return { url, stop };
}
