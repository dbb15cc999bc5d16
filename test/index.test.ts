/**
 * The public API, as a snapshot: an addition or removal shows up in review.
 * And the main entry point's import graph stays free of the charting library
 * (the report has its own entry point, `lagparity/report`).
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import * as api from '../src/index.js';
import * as report from '../src/report/index.js';
import { ROOT } from './helpers/demo.js';

/** Every package a module reaches through static imports, following relative imports. */
function packagesReached(entry: string): Set<string> {
  const seen = new Set<string>();
  const packages = new Set<string>();
  const visit = (file: string) => {
    if (seen.has(file)) return;
    seen.add(file);
    const text = readFileSync(file, 'utf8');
    for (const match of text.matchAll(/^(?:import|export)\s[^;]*?from\s+'([^']+)'/gms)) {
      const specifier = match[1] ?? '';
      if (specifier.startsWith('.')) visit(resolve(dirname(file), specifier.replace(/\.js$/, '.ts')));
      else packages.add(specifier);
    }
  };
  visit(entry);
  return packages;
}

describe('the package entry points', () => {
  it('export this list of values from lagparity', () => {
    expect(Object.keys(api).sort()).toMatchInlineSnapshot(`
      [
        "AUDIT_CAUTION",
        "AUDIT_FORMAT",
        "DEFAULT_BAND_CUTS",
        "DEFAULT_FIELD_MARGIN",
        "DEFAULT_TERMS",
        "FIELD_CAUTION",
        "FIELD_CHECK_FORMAT",
        "FIT_REPORT_FORMAT",
        "LINK_NAMES",
        "LOBBY_FORMAT",
        "LagparityInputError",
        "MAX_CSV_LINE_BYTES",
        "MAX_JSON_BYTES",
        "MAX_LATENCY_MS",
        "MAX_LATENCY_SAMPLES",
        "MAX_LOBBY_SAMPLES",
        "MAX_PLAYERS",
        "MAX_SERVERS",
        "MAX_TRIAL_ROWS",
        "MODEL_FORMAT",
        "MatchSession",
        "PLAN_FORMAT",
        "RULES_FORMAT",
        "SCHEDULE_FORMAT",
        "SERVER_LOBBY_FORMAT",
        "SESSION_FORMAT",
        "SUMMARY_FORMAT",
        "SWEEPABLE_RULES",
        "TERM_NAMES",
        "TRIALS_FORMAT",
        "auditLobbies",
        "auditLobby",
        "balanceLobby",
        "boxStats",
        "buildSchedule",
        "checkField",
        "chiSquareUpperTail",
        "chooseServer",
        "compileModel",
        "compileRules",
        "createRandomSource",
        "defaultRules",
        "duelOutcome",
        "duelWinProbability",
        "fitBinomial",
        "fitLeastSquares",
        "fitModel",
        "fiveNumber",
        "formatIssue",
        "groupTrials",
        "jainIndex",
        "jsonSchemas",
        "linkFor",
        "lobbyOnServer",
        "normalCdf",
        "normalDensity",
        "normalQuantile",
        "normalUpperTail",
        "parseJsonText",
        "parseLobby",
        "parsePlan",
        "parseServerLobby",
        "parseSessionLog",
        "parseSweep",
        "parseTermList",
        "parseTrialsCsv",
        "quantile",
        "quantileSorted",
        "rankLobbies",
        "readGroupedTrialsFile",
        "readJsonFile",
        "readTrialsFile",
        "replaySession",
        "safeParseLobby",
        "safeParsePlan",
        "safeParseServerLobby",
        "scheduleCsv",
        "solveSampledScalesInto",
        "solveScalesInto",
        "standardNormalDraw",
        "summarizeTrials",
        "sweepRule",
        "toModelFile",
        "twoSidedNormalPValue",
        "unwrap",
        "williamsDesign",
        "writeFileAtomic",
      ]
    `);
  });

  it('export the report from lagparity/report', () => {
    expect(Object.keys(report).sort()).toEqual(['REPORT_CAUTIONS', 'renderReport']);
  });

  it('keep the charting library, the CLI packages and mathjs out of the main entry point', () => {
    const reached = [...packagesReached(join(ROOT, 'src', 'index.ts'))];
    expect(reached.length).toBeGreaterThan(3);
    expect(reached.filter((name) => /^(vega|vega-lite|commander|cli-table3|mathjs)$/.test(name))).toEqual([]);
    expect([...packagesReached(join(ROOT, 'src', 'report', 'index.ts'))]).toContain('vega');
  });

  it('keep worker threads out of the main entry point (the size study runs from the CLI only)', () => {
    expect([...packagesReached(join(ROOT, 'src', 'index.ts'))].filter((name) => /worker_threads/.test(name))).toEqual([]);
  });
});
