/** `lagparity grouping-sql`: the command's options and help; the run code (`grouping-sql-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import type { GroupingSqlCliOptions } from './grouping-sql-run.js';

export function registerGroupingSql(program: Command): void {
  program
    .command('grouping-sql')
    .description('Print the one SQL statement that groups trials rows into hits/attempts counts per player, latency, scale and difficulty, for your own engine (DuckDB, PostgreSQL, ClickHouse).')
    .option('--table <name>', 'the table holding the rows, with the trials format\'s columns', 'telemetry')
    .option('--latency-step <ms>', 'latency resolution of the grouping in ms', '1')
    .option('--rows <kind>', 'what a source row is: attempts (a `hit` column, grouped) or rounds (`hits`/`attempts`, each round kept)', 'attempts')
    .option('--weight', 'the rows have a `weight` column (a grouping key)')
    .option('--no-player', 'the rows have no `player` column (then the fit has no player clusters)')
    .addHelpText(
      'after',
      `
Examples:
  lagparity grouping-sql --table shots > grouping.sql
  psql -d games --csv -f grouping.sql > counts.csv
  lagparity fit counts.csv --counts attempts --out model.json

The result has the trials format's columns (player, latency_ms, scale, difficulty, hits, attempts):
save it as CSV and fit it with --counts attempts, which gives the estimates and cluster-robust
errors the rows would (docs/warehouse.md).`,
    )
    .action(async (options: GroupingSqlCliOptions) => {
      const { runGroupingSql } = await import('./grouping-sql-run.js');
      process.exitCode = runGroupingSql(options);
    });
}
