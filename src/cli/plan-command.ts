/** `lagparity plan schedule` and `lagparity plan size`: the commands' options and help; the run code (`plan-schedule-run.ts`, `plan-size-run.ts`) is loaded when one runs. */
import type { Command } from 'commander';
import type { ScheduleOptions } from './plan-schedule-run.js';
import type { SizeOptions } from './plan-size-run.js';

/** The plan's own fields as options, shared by both commands. */
function planOptions(command: Command): Command {
  return command
    .argument('[plan]', 'plan file (lagparity/playtest-plan@1); every field can also be given, or replaced, by the options below')
    .option('--latency <list>', 'latency levels in ms, increasing, e.g. 0,60,120,180 (`latency_ms`)')
    .option('--scale <list>', 'compensation scale levels, increasing, above 0, e.g. 1,1.5 (`scale`)')
    .option('--difficulty <list>', 'difficulty levels: increasing numbers or names, e.g. standard,elite (`difficulty`)')
    .option('--repetitions <n>', 'rounds of each condition per participant (`repetitions`, default 1)')
    .option('--participants <n>', 'number of participants (`participants`)')
    .option('--practice <n>', 'practice rounds before the first condition (`practice_rounds`, default 0)')
    .option('--round-seconds <s>', 'length of a round in seconds (`round_seconds`)')
    .option('--pause-seconds <s>', 'time between two rounds in seconds (`pause_seconds`, default 0)')
    .option('--attempts <n>', 'attempts a round holds, e.g. 20 shots (`attempts_per_round`; the size study needs it)')
    .option('--session-limit <minutes>', 'warn above this session length (`session_limit_minutes`, default 45)')
    .option('--seed <n>', 'seed of the schedule and the simulations (`seed`, default 1)')
    .option('--label <text>', 'free text naming the plan (`label`)');
}

export function registerPlan(program: Command): void {
  const plan = program
    .command('plan')
    .description('Plan a playtest: the counterbalanced order of conditions for every participant, and how many participants and rounds the model needs.');

  planOptions(plan.command('schedule'))
    .description('Write each participant\'s rounds in a counterbalanced order (a Williams design where the participant count allows it, else randomised blocks), as CSV for a game client or JSON.')
    .option('--out <file>', 'write the schedule as CSV (the trials columns, plus round and practice); never replaces a file without --force')
    .option('--json', 'write the schedule as one JSON document (lagparity/playtest-schedule@1) to stdout')
    .option('--force', 'replace an existing --out file')
    .addHelpText(
      'after',
      `
The CSV has one row per round per participant: player, round, latency_ms, scale, difficulty,
practice (1 for a practice round) and weight (0 for practice). Add a hits and an attempts
column (or hit) after the playtest and \`lagparity fit\` reads it as it is.

Examples:
  lagparity plan schedule matches/preseason-playtest.plan.json --out schedule.csv
  lagparity plan schedule --latency 0,60,120,180 --scale 1,1.5 --difficulty standard,elite \\
    --participants 16 --repetitions 2 --practice 2 --round-seconds 40 --pause-seconds 15 --out schedule.csv
    16 conditions give a Williams design of 16 sequences: each of the 16 participants gets one,
    and in each repetition block every ordered pair of conditions stands next to each other once.

Exit codes: 0 written; 2 bad input (nothing is written), or --out exists without --force.`,
    )
    .action(async (path: string | undefined, options: ScheduleOptions) => {
      const { runSchedule } = await import('./plan-schedule-run.js');
      process.exitCode = await runSchedule(path, options);
    });

  planOptions(plan.command('size'))
    .description('Simulate many playtests of each size, fit each as `lagparity fit` would, and report the power, the width of the compensation scale\'s 90% interval and how often the model is unusable; recommend the smallest size that meets the goal.')
    .option('--pilot-model <file>', 'assumed coefficients: a model file fitted to a pilot (lagparity/model@1); it must have a scale term')
    .option('--pilot-trials <file>', "the pilot's trials CSV (with a player column): estimate the players' skill spread from it")
    .option('--player-sd <sd>', "the players' skill spread on the logit scale (`size_study.player_sd`; default 0.5, an assumption: docs/method.md)")
    .option('--hit-rate <p>', 'entered effects: hit rate at the lowest latency and scale 1, one for all or one per difficulty level (`effects.hit_rate`)')
    .option('--change-per-100ms <d>', 'entered effects: its change over the next 100 ms, e.g. -0.12 (`effects.change_per_100ms`)')
    .option('--scale-hit-rate <scale:p>', 'entered effects: the hit rate at another scale, e.g. 1.5:0.8 (`effects.scale_hit_rate`)')
    .option('--latency-x-log-scale <b>', 'entered effects: change of the log-scale effect per ms (logit scale, default 0)')
    .option('--players <from:to:step>', 'participant counts to try (`size_study.players`, default 8:48:8)')
    .option('--try-repetitions <list>', 'repetitions per condition to compare, e.g. 1,2,3 (default: the plan\'s)')
    .option('--studies <n>', 'simulated studies per size (`size_study.studies`, default 1000)')
    .option('--at-latency <ms>', 'latency at which the compensation scale is judged (`size_study.at_latency_ms`)')
    .option('--at-difficulty <level>', 'difficulty at which it is judged (default: the first level)')
    .option('--width <w>', "goal: the largest acceptable width of the scale's 90% interval (`goal.interval_width`)")
    .option('--width-statistic <which>', 'which width must meet it: median or p90 (met in 9 studies of 10; default p90)')
    .option('--power <p>', 'goal: the smallest acceptable power to detect the latency effect (`goal.latency_power`)')
    .option('--alpha <a>', 'significance level of the two-sided Wald tests (default 0.05)')
    .option('--terms <list>', "terms each simulated study is fitted with (default: the pilot model's, else latency,log_scale,difficulty,latency_x_log_scale)")
    .option('--threads <n>', 'worker threads (default: the processors available); the answer does not depend on it')
    .option('--json', 'write the result as one JSON document (lagparity/playtest-size@1) to stdout')
    .option('--out <file>', 'also write that JSON document here (for `lagparity report --size-study`); never replaces a file without --force')
    .option('--force', 'replace an existing --out file')
    .addHelpText(
      'after',
      `
Each simulated study draws players with random skill offsets, plays the schedule's rounds with
binomial hits under the assumed model, and is fitted with cluster-robust errors by player.

Examples:
  lagparity plan size matches/preseason-playtest.plan.json --pilot-model matches/model.json
  lagparity plan size --latency 0,50,100,150,200 --scale 1,1.5,2 --difficulty standard \\
    --repetitions 2 --round-seconds 40 --attempts 20 \\
    --hit-rate 0.68 --change-per-100ms -0.15 --scale-hit-rate 1.5:0.8 \\
    --at-latency 125 --width 0.25 --power 0.9 --players 8:48:8 --out size.json
    entered effects: 68% of shots hit at 0 ms and scale 1, 15 points fewer at 100 ms, 80% at scale
    1.5; the goal: a 90% interval of the scale needed at 125 ms no wider than 0.25 in 9 studies of
    10, and the latency effect detected 9 times in 10.

Exit codes: 0 the goal is met (the smallest size is recommended); 1 no size in the range meets it
(the closest is named; --out is not written); 2 bad input.`,
    )
    .action(async (path: string | undefined, options: SizeOptions) => {
      const { runSize } = await import('./plan-size-run.js');
      process.exitCode = await runSize(path, options);
    });
}
