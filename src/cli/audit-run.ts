/** `lagparity audit`, run: check a rule set against lobbies before a match, with a verdict a script can act on (options and help: `audit-command.ts`). */
import { basename } from 'node:path';
import { error, show } from '../issues.js';
import { auditLobbies } from '../audit/audit-lobbies.js';
import { parseSweep, sweepRule } from '../audit/sweep.js';
import { loadLobbies, loadModel, loadRules } from './inputs.js';
import { renderAudit, renderSweep } from './render-audit.js';
import { EXIT_BAD_INPUT, EXIT_FAILED_CHECK, EXIT_OK, reportIssues, writeOut } from './output.js';

export interface AuditOptions {
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
    // As a single audit: 0 when the rules can hold (some swept value puts every lobby within them), 1 when none does.
    return report.smallest_value_within_rules === null ? EXIT_FAILED_CHECK : EXIT_OK;
  }
  const report = auditLobbies(entries, model.value, rules.value);
  for (const lobby of report.lobbies) reportIssues(lobby.warnings.map((issue) => ({ ...issue, location: `${lobby.source}:${issue.location}` })));
  writeOut(options.json ? JSON.stringify(report, null, 2) : renderAudit(report, style, rules.value));
  return report.summary.outside_rules > 0 ? EXIT_FAILED_CHECK : EXIT_OK;
}
