/** `lagparity grouping-sql`, run: print the grouping statement (options and help: `grouping-sql-command.ts`). */
import { type Issue, error, show } from '../issues.js';
import { groupingSql } from '../engine/grouping-sql.js';
import { latencyStepOption } from './latency-step-option.js';
import { EXIT_BAD_INPUT, EXIT_OK, reportIssues, writeOut } from './output.js';

export interface GroupingSqlCliOptions {
  table: string;
  latencyStep: string;
  rows: string;
  weight?: boolean;
  player: boolean;
}

/** A table name: plain identifiers joined by dots (`telemetry`, `games.shots`), nothing an engine could read as more SQL. */
const TABLE_NAME = /^[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*){0,2}$/;

export function runGroupingSql(options: GroupingSqlCliOptions): number {
  const issues: Issue[] = [];
  const latencyStepMs = latencyStepOption(options.latencyStep, issues);
  if (!TABLE_NAME.test(options.table)) issues.push(error('invalid_option', '--table', `\`--table\` requires a table name of letters, digits and _ (schema. allowed), got ${show(options.table)}`));
  if (options.rows !== 'attempts' && options.rows !== 'rounds') issues.push(error('invalid_option', '--rows', `\`--rows\` requires attempts or rounds, got ${show(options.rows)}`));
  if (issues.length > 0) {
    reportIssues(issues);
    return EXIT_BAD_INPUT;
  }
  writeOut(groupingSql({ table: options.table, latencyStepMs, shape: options.rows === 'rounds' ? 'per_round' : 'per_attempt', weight: options.weight ?? false, player: options.player }));
  return EXIT_OK;
}
