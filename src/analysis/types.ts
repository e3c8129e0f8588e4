/**
 * The record of one job, one line of jobs.jsonl: a synthetic observer drawn
 * from a generating model, its dataset fitted by every candidate, and the
 * comparison. Analysis reads only these lines.
 */
export interface ParameterLine {
  name: string;
  value: number;
  se: number;
  lower95: number;
  upper95: number;
  /** Value and standard error in the fitted (transformed) space. */
  free: number;
  freeSe: number;
  atBound: boolean;
}

export interface FitLine {
  model: string;
  status: 'ok' | 'failed';
  reason: string;
  logLikelihood: number | null;
  k: number;
  aic: number | null;
  aicc: number | null;
  bic: number | null;
  cvLogLikelihood?: number | null;
  parameters: ParameterLine[];
  flatDirection: boolean;
  evaluations: number;
}

export interface ComparisonLine {
  criterion: 'aic' | 'aicc' | 'bic' | 'cv';
  status: 'won' | 'tied' | 'undecided' | 'failed';
  winner: string | null;
  contenders: string[];
  delta: Record<string, number | null>;
  weight: Record<string, number>;
}

export interface JobLine {
  /** e.g. "gen=power/obs=0017/trials=240" */
  key: string;
  generating: string;
  observer: number;
  trials: number;
  /** All parameter values of the generating model for this observer. */
  truth: Record<string, number>;
  /** Values in the generating model's fitted (transformed) space, for trade-off analysis. */
  truthFree: Record<string, number>;
  status: 'ok' | 'failed';
  error?: string;
  attempts: number;
  fits: FitLine[];
  comparison: ComparisonLine | null;
}
