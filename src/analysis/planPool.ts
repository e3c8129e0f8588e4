/**
 * The participant pool of a plan: the per-participant fits of a recovery
 * study, arranged for resampling into whole studies. Each simulated
 * participant keeps, for every trial count of the grid (nested prefixes of
 * one trial sequence), its log-evidence for every candidate model and the
 * model its own comparison chose.
 *
 * Log-evidence per participant and model, as fed to random-effects selection:
 * −BIC/2 (the Schwarz approximation to the log marginal likelihood; Schwarz
 * 1978, Annals of Statistics 6:461–464; Kass & Raftery 1995, JASA 90:773–795,
 * §4.1.3), −AIC/2, or the cross-validated log-likelihood (the predictive
 * log-evidence used as an alternative by Stephan et al. 2009, NeuroImage
 * 46:1004–1017, §2).
 *
 * A participant whose fit failed at any trial count is left out of the pool
 * at every count, so a resampled participant is the same person across the
 * trial grid; the summary reports how many were left out.
 */
import type { FitLine, JobLine } from './types.js';
import { jobOutcome, type Criterion } from './outcome.js';
import { isFiniteNumber } from './jsonSafe.js';

export type EvidenceKind = 'bic' | 'aic' | 'cv';

/** One simulated participant: per trial count (index into `trials`), its evidence row and own winner. */
export interface PoolParticipant {
  generating: string;
  observer: number;
  /** evidence[t][k]: log-evidence of candidate k at trial count trials[t]. */
  evidence: number[][];
  /** winner[t]: the model this participant's comparison chose at trials[t], or null (tied, undecided). */
  winner: (string | null)[];
}

export interface PlanPool {
  candidates: string[];
  trials: number[];
  evidenceKind: EvidenceKind;
  /** Usable participants per generating model, in observer order. */
  byModel: Record<string, PoolParticipant[]>;
  /** Participants left out per generating model (a failed job or fit at some trial count). */
  excluded: Record<string, number>;
}

export function logEvidence(fit: FitLine, kind: EvidenceKind): number | null {
  const v = kind === 'cv' ? fit.cvLogLikelihood : kind === 'bic' ? (isFiniteNumber(fit.bic) ? -fit.bic / 2 : null) : isFiniteNumber(fit.aic) ? -fit.aic / 2 : null;
  return isFiniteNumber(v) ? v : null;
}

export interface PoolOptions {
  candidates: readonly string[];
  generating: readonly string[];
  trials: readonly number[];
  evidence: EvidenceKind;
  /** Criterion and margin of the per-participant winner (the scenario's fitting settings). */
  criterion: Criterion;
  margin: number;
}

/** Arrange job lines into the pool. Lines of other trial counts or models are ignored; a missing line excludes its participant. */
export function buildPool(lines: readonly JobLine[], o: PoolOptions): PlanPool {
  const tIndex = new Map(o.trials.map((t, i) => [t, i] as const));
  const byObserver = new Map<string, (JobLine | undefined)[]>();
  for (const l of lines) {
    const ti = tIndex.get(l.trials);
    if (ti === undefined || !o.generating.includes(l.generating)) continue;
    const id = `${l.generating}\u0000${l.observer}`;
    if (!byObserver.has(id)) byObserver.set(id, new Array(o.trials.length).fill(undefined));
    byObserver.get(id)![ti] = l;
  }
  const byModel: Record<string, PoolParticipant[]> = {};
  const excluded: Record<string, number> = {};
  for (const g of o.generating) {
    byModel[g] = [];
    excluded[g] = 0;
  }
  const ids = [...byObserver.keys()].sort((a, b) => {
    const [ga, oa] = a.split('\u0000');
    const [gb, ob] = b.split('\u0000');
    return ga < gb ? -1 : ga > gb ? 1 : Number(oa) - Number(ob);
  });
  for (const id of ids) {
    const rows = byObserver.get(id)!;
    const first = rows.find((r) => r !== undefined)!;
    const evidence: number[][] = [];
    const winner: (string | null)[] = [];
    let usable = true;
    for (const line of rows) {
      const ev = line && line.status === 'ok' ? o.candidates.map((c) => { const f = line.fits.find((x) => x.model === c); return f && f.status === 'ok' ? logEvidence(f, o.evidence) : null; }) : null;
      if (!line || !ev || ev.some((v) => v === null)) {
        usable = false;
        break;
      }
      evidence.push(ev as number[]);
      const outcome = jobOutcome(line, o.candidates, { criterion: o.criterion, margin: o.margin });
      winner.push(outcome.kind === 'won' ? outcome.winner : null);
    }
    if (usable) byModel[first.generating].push({ generating: first.generating, observer: first.observer, evidence, winner });
    else excluded[first.generating]++;
  }
  return { candidates: [...o.candidates], trials: [...o.trials], evidenceKind: o.evidence, byModel, excluded };
}
