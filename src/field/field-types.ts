/**
 * The field check's output (`lagparity/field-check@1`), free of the schema
 * library (see formats/lobby-types.ts); field-schema.ts holds the schema, the
 * field descriptions and the compile-time check that the two agree.
 */
export const FIELD_CHECK_FORMAT = 'lagparity/field-check@1';

export const FIELD_VERDICTS = ['holds', 'under_compensates', 'over_compensates', 'not_enough_data', 'nothing_compensated'] as const;
/** Does compensation hold on live play? (docs/method.md, section 8) */
export type FieldVerdict = (typeof FIELD_VERDICTS)[number];

/** Is the model still right on live play? */
export type FieldRecommendation = 'keep' | 'refit';

/** An estimate with a Wald interval at `level`. */
export interface FieldEstimate {
  estimate: number;
  std_error: number;
  lower: number;
  upper: number;
  level: number;
}

/** A calibration figure (Cox 1958): model-based and cluster-robust (CR1 by player) errors; the interval is the robust one. */
export interface CalibrationEstimate extends FieldEstimate {
  model_std_error: number;
}

export interface FieldBand {
  index: number;
  label: string;
  lower_ms: number;
  /** null for the open band at the top. */
  upper_ms: number | null;
  /** false above the rules' latency limit: those players are never scaled, and the verdict leaves the band out. */
  eligible: boolean;
  /** Rows of a per-round file in the band; null for a per-attempt file (whose rows are attempts). */
  rounds: number | null;
  attempts: number;
  players: number;
  /** Players in the band who never had a scale above 1 anywhere in the file. */
  control_players: number;
  mean_scale: number | null;
  /** The model's hit probability at scale 1 for the band's rows (before compensation). */
  predicted_before: number | null;
  /** The model's hit probability at the applied scales (after compensation), with a 95% interval from the model's covariance. */
  predicted: number | null;
  predicted_lower: number | null;
  predicted_upper: number | null;
  /** Hits / attempts, with a 95% interval, cluster-robust by player. */
  observed: number | null;
  observed_lower: number | null;
  observed_upper: number | null;
  /** The band's rate minus the reference's (the best-connected band, or the fixed target), both at the file's difficulty mix, with the TOST's interval (90% by default); null for the reference band itself and bands without an interval. */
  gap: { estimate: number; lower: number; upper: number } | null;
}

export interface DataNeeded {
  /** How many times the data seen, at the same rounds per player. */
  factor: number;
  players: number;
  rows: number;
  rows_are: 'rounds' | 'attempts';
  power: number;
  /** What that much data would show at 80% power if the gap were what it is now: equivalence, or a gap beyond the margin. */
  to_show: 'equivalence' | 'beyond_margin';
}

export interface TostFigures {
  lower_margin: number;
  upper_margin: number;
  z_lower: number;
  p_lower: number;
  z_upper: number;
  p_upper: number;
  /** The larger one-sided p-value: equivalence is shown when it is below alpha. */
  p: number;
}

export interface CompensationCheck {
  verdict: FieldVerdict;
  reference_band: number | null;
  worst_band: number | null;
  /** Worst band minus the reference at the file's difficulty mix, with the interval of the two one-sided tests. */
  gap: FieldEstimate | null;
  /** The same gap as the model predicted it at the scales applied (what caps, the target and the lobbies left). */
  predicted_gap: number | null;
  tost: TostFigures | null;
  /** Log-odds per 100 ms beyond what the model predicted at the applied scales: the trend of the bands' departures (GLS), 95%, CR1. */
  residual_latency_per_100ms: FieldEstimate | null;
  data_needed: DataNeeded | null;
  message: string;
}

export type LikelihoodRatioCheck =
  | {
      status: 'tested';
      statistic: number;
      df: number;
      p_value: number;
      /** Rao and Scott (1984) second-order adjustment for clustering by player; null without robust errors. */
      adjusted: { statistic: number; df: number; p_value: number; mean_design_effect: number; a_squared: number } | null;
      /** Columns held at the model's value because the live data cannot estimate them. */
      held_at_model: string[];
    }
  | { status: 'not_tested'; reason: string };

export interface RefitCoefficient {
  name: string;
  model: number;
  refit: number | null;
  robust_std_error: number | null;
}

export interface CalibrationCheck {
  in_the_large: CalibrationEstimate | null;
  slope: CalibrationEstimate | null;
  likelihood_ratio: LikelihoodRatioCheck;
  coefficients: RefitCoefficient[];
  recommendation: FieldRecommendation;
  reason: string;
  commands: { new_data: string; combined: string | null; note: string } | null;
}

export interface FieldRange {
  min: number;
  max: number;
}

export interface FieldCheckReport {
  format: typeof FIELD_CHECK_FORMAT;
  verdict: FieldVerdict;
  recommendation: FieldRecommendation;
  /** Compensation holds and the model is kept: the CLI exits 0. */
  passed: boolean;
  summary: string[];
  data: {
    file: string;
    sha256: string | null;
    shape: 'per_attempt' | 'per_round';
    rows: number;
    attempts: number;
    players: number;
    control: { players: number; attempts: number };
    compensated: { players: number; attempts: number };
    latency_ms: FieldRange;
    scale: FieldRange;
  };
  model: {
    file: string | null;
    label: string | null;
    attribute: 'hit_area' | 'timing_window' | null;
    link: 'logit' | 'probit' | 'cloglog';
    terms: string[];
    training_latency_ms: FieldRange;
    training_scale: FieldRange;
    provenance_file: string;
  };
  settings: {
    margin: number;
    alpha: number;
    band_cuts_ms: number[];
    target: { kind: 'best_connected' } | { kind: 'reference_latency'; latency_ms: number } | { kind: 'fixed'; probability: number };
    latency_limit_ms: number | null;
    attribute: 'hit_area' | 'timing_window' | null;
  };
  bands: FieldBand[];
  compensation: CompensationCheck;
  calibration: CalibrationCheck;
  warnings: { code: string; severity: 'error' | 'warning'; location: string; message: string }[];
  caution: string;
}
