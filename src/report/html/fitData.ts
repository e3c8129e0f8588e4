/**
 * The parts of a fit folder's summary.json (written by `lossprobe fit`) the
 * fit sections read. The shapes are owned by analysis/groupFit.ts and
 * analysis/recoveryLookup.ts; this only names them for the report.
 */
import type { BootstrapSummary, GroupSummary, ParticipantSummary } from '../../analysis/groupFit.js';
import type { WinnerAgainstRecovery } from '../../analysis/recoveryLookup.js';
import type { ReportData } from './data.js';

export interface FitSummaryView {
  name: string;
  models: string[];
  criterion: string;
  dataFile: string;
  caution: string;
  provenance: { toolVersion: string; node: string; scenarioHash: string; fitHash: string };
  group: GroupSummary;
  participants: ParticipantSummary[];
  againstRecovery?: { folder: string; note: string; participants: WinnerAgainstRecovery[] };
  bootstrap?: { replicatesPerModel: number; results: BootstrapSummary[] };
}

export const fitOf = (d: ReportData) => d.summary as unknown as FitSummaryView;

/** Data paths of a fit summary's numbers. */
export const PARTICIPANTS = ['summary', 'participants'] as const;
export const GROUP = ['summary', 'group'] as const;

/** Criterion words for a sentence ("BIC", "cross-validated log-likelihood"). */
export const CRITERION_NAMES: Record<string, string> = {
  aic: 'AIC',
  aicc: 'AICc',
  bic: 'BIC',
  cv: 'cross-validated log-likelihood',
};
export const criterionName = (c: string) => CRITERION_NAMES[c] ?? c.toUpperCase();
