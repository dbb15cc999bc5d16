/** `lagparity audit`: the command's options and help; the run code (`audit-run.ts`) is loaded when it runs. */
import type { Command } from 'commander';
import { SWEEPABLE_RULES } from '../audit/sweepable-rules.js';
import type { AuditOptions } from './audit-run.js';

export function registerAudit(program: Command): void {
  program
    .command('audit')
    .description('Judge a rule set against lobbies: per-player table, lobby figures and a verdict (within or outside rules) with every reason.')
    .argument('<paths...>', 'lobby files (*.lobby.json), folders of them, or - for standard input')
    .requiredOption('--model <file>', 'model file (lagparity/model@1)')
    .requiredOption('--rules <file>', 'rules file (lagparity/rules@1) with the limits to judge')
    .option('--json', 'write one JSON document (lagparity/audit-result@2, or lagparity/audit-sweep@2 with --sweep; schemas in docs/schemas/) to stdout')
    .option('--format <style>', 'table (default) or markdown')
    .option('--sweep <spec>', `re-run the audit over one rule's values: RULE=FROM:TO:STEP or RULE=V1,V2 (rules: ${SWEEPABLE_RULES.join(', ')})`)
    .addHelpText(
      'after',
      `
Examples:
  lagparity audit matches --model matches/model.json --rules matches/league-rules.json
  lagparity audit matches --model matches/model.json --rules matches/league-rules.json --sweep scale_cap=1.2:2.0:0.1
  lagparity audit - --model matches/model.json --rules matches/league-rules.json --json < matches/even-5v5.lobby.json

Exit codes: 0 every lobby within rules; 1 some lobby outside rules; 2 bad input.
With --sweep: 0 when some swept value puts every lobby within rules (the smallest is marked *); 1 when none does.`,
    )
    .action(async (paths: string[], options: AuditOptions) => {
      const { runAudit } = await import('./audit-run.js');
      process.exitCode = await runAudit(paths, options);
    });
}
