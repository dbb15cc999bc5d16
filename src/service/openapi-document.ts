/**
 * The service's OpenAPI 3.1 document, generated (by @asteasolutions/zod-to-openapi)
 * from the same zod schemas that validate the request bodies and describe the
 * audit, so that the document cannot drift from what the service accepts.
 */
import { OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { auditReportSchema } from '../audit/audit-schema.js';
import { BALANCE_FORMAT, LOBBY_RANKING_FORMAT, SERVER_CHOICE_FORMAT } from '../formats/result-documents.js';
import { balanceBodySchema, rankBodySchema, serverBodySchema } from './request-bodies.js';

const issuesSchema = z
  .object({
    issues: z.array(z.object({ code: z.string().describe('Stable code, as the command line uses them.'), path: z.string().describe('Where in the body (`lobby.players[3].latency_ms`), or the limit that refused it.'), message: z.string() }).strict()),
  })
  .strict();

/** Results the command line documents in docs/formats.md; described here by their fixed fields. */
const balanceResultSchema = z.looseObject({ format: z.literal(BALANCE_FORMAT), lobbies: z.array(z.looseObject({ status: z.enum(['balanced', 'capped', 'infeasible', 'rejected']) })) });
const serverChoiceSchema = z.looseObject({ format: z.literal(SERVER_CHOICE_FORMAT), match_id: z.string(), status: z.enum(['chosen', 'rejected']) });
const rankingSchema = z.looseObject({ format: z.literal(LOBBY_RANKING_FORMAT), match_id: z.string(), status: z.enum(['ranked', 'rejected']) });

// Named once per process (zod's registry refuses an id twice): the generator puts each under components.
const named = {
  issues: issuesSchema.meta({ id: 'Issues' }),
  balanceBody: balanceBodySchema.meta({ id: 'BalanceBody' }),
  auditBody: balanceBodySchema.meta({ id: 'AuditBody' }),
  rankBody: rankBodySchema.meta({ id: 'RankBody' }),
  serverBody: serverBodySchema.meta({ id: 'ServerBody' }),
  balanceResult: balanceResultSchema.meta({ id: 'BalanceResult' }),
  auditResult: auditReportSchema.meta({ id: 'AuditResult' }),
  ranking: rankingSchema.meta({ id: 'LobbyRanking' }),
  serverChoice: serverChoiceSchema.meta({ id: 'ServerChoice' }),
};

export function openApiDocument(version: string): unknown {
  const registry = new OpenAPIRegistry();
  const issues = named.issues;
  const refused = {
    400: { description: 'Not JSON, or a body that fails validation; each issue names its place.', content: { 'application/json': { schema: issues } } },
    413: { description: 'A body above the size limit (`--max-body-bytes`).', content: { 'application/json': { schema: issues } } },
  };
  const post = (path: string, summary: string, body: z.ZodType, answer: z.ZodType, description: string) =>
    registry.registerPath({
      method: 'post',
      path,
      summary,
      request: { body: { required: true, content: { 'application/json': { schema: body } } } },
      responses: { 200: { description, content: { 'application/json': { schema: answer } } }, ...refused },
    });
  post('/v1/balance', 'Per-player scales for one lobby', named.balanceBody, named.balanceResult, 'What `lagparity balance --json` prints for the same lobby and rules (a lobby the model cannot solve is `rejected`, still 200).');
  post('/v1/audit', 'Check a rule set against one lobby', named.auditBody, named.auditResult, 'What `lagparity audit --json` prints for the same lobby and rules (`source` is `stdin`).');
  post('/v1/rank', 'Rank candidate lobbies from a pool of queued players', named.rankBody, named.ranking, 'The candidates, fairest first, and the full balance of the best.');
  post('/v1/server', 'Choose the server on which compensation leaves a match fairest', named.serverBody, named.serverChoice, 'What `lagparity choose-server --json` prints for the same lobby and rules.');
  for (const [path, summary, description] of [
    ['/healthz', 'Liveness', '200 while the process runs.'],
    ['/readyz', 'Readiness', '200 once the model is loaded; 503 while draining after SIGTERM.'],
    ['/metrics', 'Prometheus metrics', 'Text exposition format 0.0.4.'],
    ['/openapi.json', 'This document', 'OpenAPI 3.1.'],
  ] as const) {
    registry.registerPath({ method: 'get', path, summary, responses: { 200: { description } } });
  }
  return new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: { title: 'lagparity service', version, description: 'Latency compensation for matchmakers: balance, audit, rank candidate lobbies, choose a server. Compensation changes competitive outcomes: disclose it to players and defer to the league\'s own rules and officials.' },
  });
}
