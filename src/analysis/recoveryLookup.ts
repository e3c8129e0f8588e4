/**
 * Reading a participant's fit against a recovery study of the same scenario:
 * at the study's trial count nearest the participant's, how often choosing
 * this model was right in simulation (the inversion matrix's diagonal,
 * P(generating = m | chosen = m); Wilson & Collins 2019, eLife 8:e49547,
 * rule 6), and whether each fitted parameter lies inside the range the study
 * drew true values from and how well it was recovered there (bins of the
 * true value for loss parameters, the whole range otherwise).
 *
 * "Recovered well" is our stated rule of thumb (common practice): a
 * true-versus-fitted correlation of at least 0.7 over the studied range and,
 * where the value falls in a bin, at least 80% interval coverage in that bin.
 */
import type { Summary } from './summarize.js';
import { isFiniteNumber } from './jsonSafe.js';

export const WELL_RECOVERED_CORRELATION = 0.7;
export const WELL_RECOVERED_COVERAGE = 0.8;

/** The parts of a run folder's summary.json this reads. */
export interface RecoveryStudy {
  name: string;
  models: string[];
  overall: Summary;
  byTrials?: Record<string, Summary>;
}

export interface ParameterAgainstRecovery {
  name: string;
  estimate: number;
  /** Smallest and largest true value in the study at that trial count; null if the parameter was not studied. */
  studiedRange: [number, number] | null;
  /** Null when the study reports no range for the parameter (only loss parameters are binned). */
  inStudiedRange: boolean | null;
  correlation: number | null;
  rootMeanSquaredError: number | null;
  bias: number | null;
  /** The bin of true values holding the estimate (loss parameters): its coverage and RMSE. */
  binCoverage: number | null;
  binRootMeanSquaredError: number | null;
  recoveredWell: boolean;
}

export interface WinnerAgainstRecovery {
  participant: string;
  decision: string;
  participantTrials: number;
  recoveryTrials: number;
  trialNote: string;
  /** P(generating = decision | chosen = decision) in the study; null if never chosen there. */
  choiceRightInSimulation: number | null;
  /** Synthetic datasets of the study that chose this model. */
  choiceMadeInSimulation: number;
  parameters: ParameterAgainstRecovery[];
}

function nearest(counts: number[], n: number): number {
  // Ties go to the smaller count: the cautious reading.
  return counts.reduce((best, c) => (Math.abs(c - n) < Math.abs(best - n) ? c : best), counts[0]);
}

export function winnerAgainstRecovery(
  study: RecoveryStudy,
  participant: string,
  decision: string,
  trials: number,
  estimates: readonly { name: string; estimate: number }[],
): WinnerAgainstRecovery | null {
  const counts = (study.byTrials ? Object.keys(study.byTrials).map(Number) : study.overall.trials.filter(isFiniteNumber)).sort((a, b) => a - b);
  if (!counts.length) return null;
  const t = nearest(counts, trials);
  const s = study.byTrials?.[String(t)] ?? study.overall;
  const trialNote = t === trials ? `the study ran exactly ${t} trials` : `nearest trial count in the study: ${t} (participant has ${trials})`;
  const column = s.inversion.columns.indexOf(decision);
  const row = s.inversion.rows.indexOf(decision);
  const right = column >= 0 && row >= 0 ? s.inversion.rate[row][column] : null;
  const chosen = column >= 0 ? s.inversion.chosen[column] ?? 0 : 0;
  const recovery = s.recovery.find((r) => r.generating === decision);
  const parameters = estimates.map((e): ParameterAgainstRecovery => {
    const p = recovery?.parameters.find((q) => q.name === e.name);
    const bins = p?.bins ?? null;
    const lo = bins?.[0]?.lower;
    const hi = bins?.[bins.length - 1]?.upper;
    const range: [number, number] | null = isFiniteNumber(lo) && isFiniteNumber(hi) ? [lo, hi] : null;
    const bin = bins?.find((b) => isFiniteNumber(b.lower) && isFiniteNumber(b.upper) && e.estimate >= b.lower && e.estimate <= b.upper) ?? null;
    const correlation = p && isFiniteNumber(p.pearson) ? p.pearson : null;
    const coverage = bin && isFiniteNumber(bin.coverage.estimate) ? bin.coverage.estimate : null;
    const inRange = range ? e.estimate >= range[0] && e.estimate <= range[1] : null;
    return {
      name: e.name,
      estimate: e.estimate,
      studiedRange: range,
      inStudiedRange: inRange,
      correlation,
      rootMeanSquaredError: p && isFiniteNumber(p.rmse) ? p.rmse : null,
      bias: p && isFiniteNumber(p.bias) ? p.bias : null,
      binCoverage: coverage,
      binRootMeanSquaredError: bin && isFiniteNumber(bin.rmse) ? bin.rmse : null,
      recoveredWell: correlation !== null && correlation >= WELL_RECOVERED_CORRELATION && (range === null || (inRange === true && coverage !== null && coverage >= WELL_RECOVERED_COVERAGE)),
    };
  });
  return {
    participant,
    decision,
    participantTrials: trials,
    recoveryTrials: t,
    trialNote,
    choiceRightInSimulation: isFiniteNumber(right) ? right : null,
    choiceMadeInSimulation: chosen,
    parameters,
  };
}
