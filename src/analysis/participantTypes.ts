/**
 * Records of `fit` on participants' data, one line each in participants.jsonl
 * and bootstrap.jsonl. Analysis of real data reads only these lines.
 */
import type { ComparisonLine, FitLine } from './types.js';
import type { PredictiveCheck } from './predictiveCheck.js';

export interface ParticipantLine {
  /** e.g. "participant=p07" (the id URI-encoded, so '/' and '=' cannot break the key). */
  key: string;
  participant: string;
  trials: number;
  status: 'ok' | 'failed';
  error?: string;
  fits: FitLine[];
  comparison: ComparisonLine | null;
  /** One check per fitted model. */
  predictive: PredictiveCheck[];
}

export interface BootstrapLine {
  /** e.g. "participant=p07/source=power/replicate=0003" */
  key: string;
  participant: string;
  /** The model whose fitted parameters simulated this replicate. */
  source: string;
  replicate: number;
  status: 'ok' | 'failed';
  error?: string;
  comparisonStatus: ComparisonLine['status'] | null;
  winner: string | null;
}
