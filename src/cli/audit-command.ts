/** `lagparity audit`: check a rule set against lobbies before a match, with a verdict a script can act on. */
import { basename } from 'node:path';
import type { Command } from 'commander';
import { error, show } from '../issues.js';
import { auditLobbies } from '../audit/audit-lobbies.js';
import { parseSweep, sweepRule, SWEEPABLE_RULES } from '../audit/sweep.js';
import { loadLobbies, loadModel, loadRules } from './inputs.js';
import { renderAudit, renderSweep } from './render-audit.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';

interface AuditOptions {
  model: string;
  rules: string;
  json?: boolean;
  format?: string;
  sweep?: string;
}

export async function runAudit(paths: string[], options: AuditOptions): Promise<number> {
  const style = options.format ?? 'table';
  if (style !== 'table' && style !== 'markdown') {
    reportIssues([error('invalid_option', '--format', `\`--format\` requires table or markdown, got ${show(style)}`)]);
    return EXIT_BAD_INPUT;
  }
  const sweep = options.sweep === undefined ? undefined : parseSweep(options.sweep);
  if (sweep !== undefined && !sweep.ok) {
    reportIssues(sweep.issues);
    return EXIT_BAD_INPUT;
  }
  const [model, rules, lobbies] = await Promise.all([loadModel(options.model), loadRules(options.rules), loadLobbies(paths)]);
  if (!model.ok || !rules.ok || !lobbies.ok) {
    reportIssues([...(model.ok ? [] : model.issues), ...(rules.ok ? [] : rules.issues), ...(lobbies.ok ? [] : lobbies.issues)]);
    return EXIT_BAD_INPUT;
  }
  const entries = lobbies.value.map(({ path, lobby }) => ({ lobby, source: path === '-' ? 'stdin' : basename(path) }));
  if (sweep !== undefined && sweep.ok) {
    const report = sweepRule(entries, model.value, rules.value, sweep.value);
    writeOut(options.json ? JSON.stringify(report, null, 2) : renderSweep(report, style));
    return EXIT_OK;
  }
  const report = auditLobbies(entries, model.value, rules.value);
  for (const lobby of report.lobbies) reportIssues(lobby.warnings.map((issue) => ({ ...issue, location: `${lobby.source}:${issue.location}` })));
  writeOut(options.json ? JSON.stringify(report, null, 2) : renderAudit(report, style));
  return report.summary.failed > 0 ? EXIT_FAILED_CHECK : EXIT_OK;
}

export function registerAudit(program: Command): void {
  program
    .command('audit')
    .description('Judge a rule set against lobbies: per-player table, lobby figures and a pass/fail verdict with every reason.')
    .argument('<paths...>', 'lobby files (*.lobby.json), folders of them, or - for standard input')
    .requiredOption('--model <file>', 'model file (lagparity/model@1)')
    .requiredOption('--rules <file>', 'rules file (lagparity/rules@1) with the limits to judge')
    .option('--json', 'write one JSON document (lagparity/audit-result@1, schema in docs/schemas/) to stdout')
    .option('--format <style>', 'table (default) or markdown')
    .option('--sweep <spec>', `re-run the audit over one rule's values: RULE=FROM:TO:STEP or RULE=V1,V2 (rules: ${SWEEPABLE_RULES.join(', ')})`)
    .addHelpText(
      'after',
      `
Examples:
  lagparity audit matches --model matches/model.json --rules matches/league-rules.json
  lagparity audit matches --model matches/model.json --rules matches/league-rules.json --sweep scale_cap=1.2:2.0:0.1
  lagparity audit - --model matches/model.json --rules matches/league-rules.json --json < matches/even-5v5.lobby.json

Exit codes: 0 every lobby passes (or a sweep ran); 1 some lobby fails; 2 bad input.`,
    )
    .action(async (paths: string[], options: AuditOptions) => {
      process.exitCode = await runAudit(paths, options);
    });
}
