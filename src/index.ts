/**
 * lagparity: per-player latency compensation from a fitted model of hit
 * probability.
 *
 * The main entry point: every public value, then every public type,
 * alphabetised. The HTML report is a separate entry point, `lagparity/report`,
 * because its charting library is slow to import and a matchmaker never needs
 * it. The command line lives in `dist/cli/` and is not exported.
 *
 * A matchmaker's path:
 *   const model = compileModel(modelJson);        // once
 *   const rules = compileRules(rulesJson);        // once
 *   const lobby = safeParseLobby(payload);        // per untrusted payload
 *   const result = balanceLobby(lobby.value, model.value, rules.value);
 * and to choose among candidates and keep the scales right in play:
 * rankLobbies, chooseServer, MatchSession (README, "Use as a module").
 * Before a playtest: parsePlan, buildSchedule, scheduleCsv, williamsDesign
 * (the size study's simulations run on worker threads and are the CLI's,
 * `lagparity plan size`, never loaded from here). After a season,
 * checkField: did the scales equalise live play, and is the model still right?
 */
export { AUDIT_CAUTION, auditLobbies, auditLobby } from './audit/audit-lobbies.js';
export { AUDIT_FORMAT } from './audit/audit-types.js';
export { balanceLobby } from './solver/balance-lobby.js';
export { boxStats, fiveNumber } from './stats/box-stats.js';
export { buildSchedule, SCHEDULE_FORMAT } from './plan/build-schedule.js';
export { chooseServer, lobbyOnServer } from './solver/choose-server.js';
export { chiSquareUpperTail, normalCdf, normalDensity, normalQuantile, normalUpperTail, twoSidedNormalPValue } from './stats/distributions.js';
export { checkField, DEFAULT_FIELD_MARGIN, FIELD_CAUTION } from './field/check-field.js';
export { compileModel } from './model/compile.js';
export { compileRules, defaultRules } from './solver/rules.js';
export { createRandomSource, standardNormalDraw } from './random.js';
export { DEFAULT_BAND_CUTS } from './field/latency-bands.js';
export { DEFAULT_TERMS, TERM_NAMES, parseTermList } from './model/terms.js';
export { duelOutcome, duelWinProbability } from './stats/duel.js';
export { FIELD_CHECK_FORMAT } from './field/field-types.js';
export { fitBinomial } from './model/fit-binomial.js';
export { fitLeastSquares } from './model/fit-least-squares.js';
export { FIT_REPORT_FORMAT } from './model/fit-report-types.js';
export { fitModel } from './model/fit-model.js';
export { formatIssue, LagparityInputError, unwrap } from './issues.js';
export { groupTrials } from './model/collapse.js';
export { jainIndex } from './stats/jain-index.js';
export { jsonSchemas } from './formats/json-schemas.js';
export { LINK_NAMES, linkFor } from './model/links.js';
export { LOBBY_FORMAT, MAX_LATENCY_MS, MAX_LATENCY_SAMPLES, MAX_LOBBY_SAMPLES, MAX_PLAYERS } from './formats/lobby-types.js';
export { MatchSession, SESSION_FORMAT } from './session/match-session.js';
export { MAX_CSV_LINE_BYTES, parseTrialsCsv } from './formats/trials-csv.js';
export { MAX_TRIAL_ROWS, TRIALS_FORMAT } from './formats/trials-types.js';
export { MAX_JSON_BYTES, parseJsonText } from './formats/json-input.js';
export { MODEL_FORMAT } from './formats/model-format.js';
export { parseLobby, parseServerLobby, safeParseLobby, safeParseServerLobby } from './formats/lobby.js';
export { parsePlan, safeParsePlan } from './formats/plan.js';
export { PLAN_FORMAT } from './formats/plan-types.js';
export { parseSessionLog } from './session/session-log-file.js';
export { parseSweep, sweepRule, SWEEPABLE_RULES } from './audit/sweep.js';
export { quantile, quantileSorted } from './stats/quantile.js';
export { rankLobbies } from './solver/rank-lobbies.js';
export { scheduleCsv } from './plan/schedule-csv.js';
export { readJsonFile } from './io/read-json.js';
export { readGroupedTrialsFile, readTrialsFile } from './io/read-trials.js';
export { replaySession } from './session/replay-session.js';
export { RULES_FORMAT } from './formats/rules-types.js';
export { MAX_SERVERS, SERVER_LOBBY_FORMAT } from './formats/server-lobby-types.js';
export { solveSampledScalesInto, solveScalesInto } from './solver/solve-scales-into.js';
export { SUMMARY_FORMAT, summarizeTrials } from './summary/summarize-trials.js';
export { toModelFile } from './model/to-model-file.js';
export { williamsDesign } from './plan/williams-design.js';
export { writeFileAtomic } from './io/write-file.js';

export type { AuditEntry } from './audit/audit-lobbies.js';
export type { AuditReason, AuditReport, AuditRule, AuditSummary, LobbyAudit, SweepReport } from './audit/audit-types.js';
export type { BalanceOptions, BalanceResult, LobbySummary, LobbyViews, PlayerBalance, TeamFigures } from './solver/balance-lobby.js';
export type { Binding } from './solver/solve-scales.js';
export type { BinomialData, BinomialFit, BinomialFitOptions } from './model/binomial-fit-types.js';
export type { BoxStats, BoxStatsOptions, FiveNumber } from './stats/box-stats.js';
export type { BulkSolveResult } from './solver/solve-scales-into.js';
export type { CalibrationCheck, CompensationCheck, FieldBand, FieldCheckReport, FieldRecommendation, FieldVerdict } from './field/field-types.js';
export type { CollapsedTrials, GroupedTrials } from './model/collapsed-trials.js';
export type { CompiledModel, PredictorLine } from './model/compile.js';
export type { CompiledRules } from './solver/rules.js';
export type { DesignMatrix } from './numeric/design-matrix.js';
export type { DuelOutcome, VolleyOrder } from './stats/duel.js';
export type { DuelPair, DuelView } from './solver/views/duel-view.js';
export type { ExploitView, PlayerExploit } from './solver/views/exploit-view.js';
export type { FieldCheckOptions } from './field/check-field.js';
export type { FitModelOptions, FitReport } from './model/fit-report-types.js';
export type { Issue, IssueSeverity, Result } from './issues.js';
export type { LeastSquaresData, LeastSquaresFit } from './model/fit-least-squares.js';
export type { Link, LinkName } from './model/links.js';
export type { LobbyFile, LobbyPlayer } from './formats/lobby-types.js';
export type { MatchInfo, SessionEvent, SessionLogger, SessionOptions } from './session/match-session.js';
export type { ModelFile } from './formats/model-types.js';
export type { ModelProvenance } from './model/to-model-file.js';
export type { PlanFile } from './formats/plan-types.js';
export type { PlayerScaleInterval, UncertaintyOptions, UncertaintyView } from './solver/views/uncertainty-view.js';
export type { QuantileType } from './stats/quantile.js';
export type { CandidateFigures, RankResult } from './solver/rank-lobbies.js';
export type { ReplayReport } from './session/replay-session.js';
export type { ReadTrialsOptions } from './io/read-trials.js';
export type { Schedule, ScheduleParticipant, ScheduleRound } from './plan/build-schedule.js';
export type { RandomSource } from './random.js';
export type { RulesFile, RulesInput } from './formats/rules-types.js';
export type { ServerChoice, ServerFigures } from './solver/choose-server.js';
export type { ServerLobbyFile, ServerLobbyPlayer } from './formats/server-lobby-types.js';
export type { SummarizeOptions, TrialsSummary } from './summary/summarize-trials.js';
export type { TermName } from './model/terms.js';
export type { Trials } from './formats/trials-types.js';
export type { ValidLobby, ValidServerLobby } from './formats/lobby.js';
export type { ValidPlan } from './formats/plan.js';
export type { WriteFileOptions } from './io/write-file.js';
