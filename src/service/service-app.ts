/**
 * The HTTP service's routes (fastify), without the process around them
 * (serve.ts: listening, signals, the model file). Every answer to a body a
 * client sent is 200, 400, 404, 405, 408 or 413, never 500; one JSON log line
 * per request goes to `requestLog` (request id, method, route, status,
 * duration; never a body).
 */
import { createServer } from 'node:http';
import Fastify, { type FastifyInstance, type FastifyReply, type FastifyRequest } from 'fastify';
import type { Logger } from 'pino';
import { auditLobbies } from '../audit/audit-lobbies.js';
import { type Issue, error } from '../issues.js';
import type { CompiledModel } from '../model/compile.js';
import type { CompiledRules } from '../solver/rules.js';
import { balanceDocument, balanceForOutput, documentText, rankingDocument, serverChoiceDocument } from '../formats/result-documents.js';
import { openApiDocument } from './openapi-document.js';
import { type ServiceLimits, parseBalanceBody, parseRankBody, parseServerBody, serviceIssues } from './request-bodies.js';
import type { ServiceMetrics } from './service-metrics.js';

/** What the routes read at each request: swapped whole on a reload. */
export interface ServiceState {
  model: CompiledModel;
  readonly rules: CompiledRules;
  ready: boolean;
  draining: boolean;
}

export interface ServiceOptions {
  readonly state: ServiceState;
  readonly limits: ServiceLimits;
  readonly metrics: ServiceMetrics;
  readonly requestLog: Logger;
  /** Where errors the service itself made go (never stdout). */
  readonly errorLog: Logger;
  readonly version: string;
}

/** Routes and the methods each answers (for 405 and `Allow`). */
const ROUTES: Record<string, readonly string[]> = {
  '/v1/balance': ['POST'],
  '/v1/audit': ['POST'],
  '/v1/rank': ['POST'],
  '/v1/server': ['POST'],
  '/healthz': ['GET', 'HEAD'],
  '/readyz': ['GET', 'HEAD'],
  '/metrics': ['GET', 'HEAD'],
  '/openapi.json': ['GET', 'HEAD'],
};

/** A client-chosen request id is kept when it is short and plain; otherwise one is made. */
const CLIENT_ID = /^[A-Za-z0-9._:-]{1,64}$/;

function sendIssues(reply: FastifyReply, status: number, issues: readonly Issue[]): FastifyReply {
  return reply.code(status).type('application/json').send(JSON.stringify({ issues: serviceIssues(issues) }));
}

function sendText(reply: FastifyReply, text: string): FastifyReply {
  return reply.code(200).type('application/json').send(text);
}

export function buildService(options: ServiceOptions): FastifyInstance {
  const { state, limits, metrics, requestLog, errorLog } = options;
  let sequence = 0;
  const app = Fastify({
    logger: false,
    bodyLimit: limits.maxBodyBytes,
    // Node checks the request timeout every connectionsCheckingInterval (30 s by
    // default): check often enough that a stalled body is refused near its limit.
    serverFactory: (handler) => createServer({ requestTimeout: limits.requestTimeoutMs, connectionsCheckingInterval: Math.min(1000, Math.max(50, limits.requestTimeoutMs / 4)), keepAliveTimeout: 72_000 }, handler),
    return503OnClosing: true,
    forceCloseConnections: 'idle',
    genReqId: (request) => {
      const given = request.headers['x-request-id'];
      if (typeof given === 'string' && CLIENT_ID.test(given)) return given;
      sequence += 1;
      return `${process.pid.toString(36)}-${sequence.toString(36)}`;
    },
  });

  // Bodies are read as text whatever the content type (a curl -d without a header
  // still works) and parsed by the same JSON reader as the command line's files.
  app.removeAllContentTypeParsers();
  app.addContentTypeParser('*', { parseAs: 'string' }, (_request, body, done) => done(null, body));

  app.addHook('onSend', async (request, reply) => {
    reply.header('x-request-id', request.id);
  });
  app.addHook('onResponse', async (request, reply) => {
    const route = request.routeOptions.url ?? 'unmatched';
    const status = reply.statusCode;
    const seconds = reply.elapsedTime / 1000;
    metrics.requests.inc({ route, method: request.method, status: String(status) });
    metrics.duration.observe({ route }, seconds);
    requestLog.info({ request_id: request.id, method: request.method, route, status, duration_ms: Math.round(reply.elapsedTime * 1000) / 1000 }, 'request');
  });

  app.setNotFoundHandler((request, reply) => {
    const path = (request.url.split('?')[0] ?? '').replace(/\/+$/, '') || '/';
    const methods = ROUTES[path];
    if (methods !== undefined) {
      reply.header('allow', methods.join(', '));
      return sendIssues(reply, 405, [error('method_not_allowed', path, `\`${path}\` requires ${methods.join(' or ')}, got ${request.method}`)]);
    }
    return sendIssues(reply, 404, [error('not_found', path, `the service has ${Object.keys(ROUTES).join(', ')}; got ${request.method} ${path.slice(0, 200)}`)]);
  });

  app.setErrorHandler((cause: Error & { code?: string; statusCode?: number }, request, reply) => {
    if (cause.code === 'FST_ERR_CTP_BODY_TOO_LARGE') {
      return sendIssues(reply, 413, [error('too_large', 'body', `the request body requires at most ${limits.maxBodyBytes} bytes (the service's --max-body-bytes), got more`)]);
    }
    const status = cause.statusCode ?? 500;
    if (status >= 400 && status < 500) return sendIssues(reply, status, [error('bad_request', 'body', `the request requires a well-formed HTTP body: ${cause.message}`)]);
    errorLog.error({ request_id: request.id, route: request.routeOptions.url, err: { message: cause.message, stack: cause.stack } }, 'internal error');
    return sendIssues(reply, 500, [error('internal_error', '', 'the service failed on this request; its log names the cause')]);
  });

  const bodyText = (request: FastifyRequest): string => (typeof request.body === 'string' ? request.body : '');

  app.post('/v1/balance', async (request, reply) => {
    const body = parseBalanceBody(bodyText(request), state.rules, limits);
    if (!body.ok) return sendIssues(reply, 400, body.issues);
    return sendText(reply, documentText(balanceDocument([balanceForOutput(body.value.lobby, state.model, body.value.rules)])));
  });

  app.post('/v1/audit', async (request, reply) => {
    const body = parseBalanceBody(bodyText(request), state.rules, limits);
    if (!body.ok) return sendIssues(reply, 400, body.issues);
    return sendText(reply, documentText(auditLobbies([{ lobby: body.value.lobby, source: 'stdin' }], state.model, body.value.rules)));
  });

  app.post('/v1/rank', async (request, reply) => {
    const body = parseRankBody(bodyText(request), state.rules, limits);
    if (!body.ok) return sendIssues(reply, 400, body.issues);
    return sendText(reply, documentText(rankingDocument(body.value.pool, body.value.candidates, state.model, body.value.rules)));
  });

  app.post('/v1/server', async (request, reply) => {
    const body = parseServerBody(bodyText(request), state.rules, limits);
    if (!body.ok) return sendIssues(reply, 400, body.issues);
    return sendText(reply, documentText(serverChoiceDocument(body.value.lobby, state.model, body.value.rules)));
  });

  app.get('/healthz', async (_request, reply) => reply.type('application/json').send('{"status":"ok"}\n'));
  app.get('/readyz', async (_request, reply) => {
    const ready = state.ready && !state.draining;
    return reply.code(ready ? 200 : 503).type('application/json').send(`{"status":"${ready ? 'ready' : state.draining ? 'draining' : 'starting'}"}\n`);
  });
  app.get('/metrics', async (_request, reply) => reply.type(metrics.registry.contentType).send(await metrics.registry.metrics()));
  let openApi: string | undefined;
  app.get('/openapi.json', async (_request, reply) => {
    openApi ??= documentText(openApiDocument(options.version));
    return reply.type('application/json').send(openApi);
  });
  return app;
}
