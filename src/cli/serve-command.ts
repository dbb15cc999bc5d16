/** `lagparity serve`: the command's options and help; the run code (`serve-run.ts`, with the HTTP server) is loaded when it runs. */
import type { Command } from 'commander';
import type { ServeCommandOptions } from './serve-run.js';

export function registerServe(program: Command): void {
  program
    .command('serve')
    .description('Run the solver as a local HTTP/1.1 JSON service for a matchmaker in any language.')
    .requiredOption('--model <file>', 'model file (lagparity/model@1); SIGHUP reloads it')
    .option('--rules <file>', 'rules file (lagparity/rules@1) for requests without rules; default: floor 1, cap 1.5')
    .option('--host <address>', 'address to listen on', '127.0.0.1')
    .option('--port <number>', 'port to listen on; 0 picks a free one', '8321')
    .option('--max-body-bytes <n>', 'largest request body (default and most: 16777216, the JSON file limit)')
    .option('--max-players <n>', 'most players in a lobby, pool or candidate (default and most: 256)')
    .option('--max-samples <n>', 'most latency samples per player (default and most: 4096)')
    .option('--max-candidates <n>', 'most candidate lobbies in one /v1/rank request (default and most: 10000)')
    .option('--request-timeout-ms <n>', 'longest time to receive a whole request (default 10000)')
    .addHelpText(
      'after',
      `
Routes: POST /v1/balance, /v1/audit, /v1/rank, /v1/server; GET /healthz, /readyz, /metrics,
/openapi.json. Once listening it prints one line with the URL to stderr; stdout carries one JSON
line per request and nothing else. SIGTERM drains and exits 0; SIGHUP reloads the model file.

It speaks plain HTTP with no authentication and listens on 127.0.0.1 unless told otherwise: put a
reverse proxy with TLS and authentication in front of it before opening it to a network
(docs/security.md).

Example:
  lagparity serve --model matches/model.json --rules matches/league-rules.json --port 8321
  curl -s localhost:8321/v1/balance -H 'content-type: application/json' \\
    -d "{\\"lobby\\": $(cat matches/even-5v5.lobby.json)}"

Exit codes: 0 stopped by SIGTERM or SIGINT; 2 bad options, a model or rules file that does not
load, or a port that cannot be opened.`,
    )
    .action(async (options: ServeCommandOptions) => {
      const { runServe } = await import('./serve-run.js');
      process.exitCode = await runServe(options);
    });
}
