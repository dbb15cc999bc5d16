/**
 * The model format's type (`lagparity/model@1`), free of the schema library
 * (see lobby-types.ts); model-file.ts holds the schema and the meaning of each
 * field.
 */
import type { TermName } from '../model/terms.js';

export interface Range {
  min: number;
  max: number;
}

export type DifficultyCoding = { kind: 'numeric' } | { kind: 'levels'; levels: string[]; reference: string };

export interface ModelFile {
  format: 'lagparity/model@1';
  label?: string | undefined;
  attribute?: 'hit_area' | 'timing_window' | undefined;
  family: 'binomial';
  link: 'logit' | 'probit' | 'cloglog';
  terms: TermName[];
  difficulty: DifficultyCoding;
  coefficients: {
    names: string[];
    estimates: number[];
    covariance: number[][];
    covariance_kind: 'model' | 'cluster_robust_cr1' | 'assumed';
  };
  training: {
    latency_ms: Range;
    scale: Range;
    difficulty: Range | string[];
    rows: number;
    attempts: number;
    players?: number | undefined;
  };
  fit?: Record<string, unknown> | undefined;
  provenance: {
    file: string;
    rows: number;
    sha256: string;
    created_by?: string | undefined;
  };
}
