/**
 * The analysis of `fit`: per participant, every candidate's log-likelihood,
 * criteria, differences to the best and weights (Burnham & Anderson 2002,
 * §2.6 and §2.9), parameter estimates with 95% intervals, the posterior-
 * predictive check and the decision; at group level, winner counts and
 * random-effects model selection (Stephan et al. 2009; Rigoux et al. 2014,
 * see randomEffects.ts), with warnings where models the design cannot tell
 * apart share the evidence (then their exceedance probabilities mean nothing).
 *
 * Lines are sorted by key before anything is added up, so the result does not
 * depend on the order workers or resumes wrote them.
 */
import type { BootstrapLine, ParticipantLine } from './participantTypes.js';
import type { PredictiveCheck } from './predictiveCheck.js';
import { compareJobKeys } from './jobKeys.js';
import { isFiniteNumber } from './jsonSafe.js';
import { randomEffectsSelection } from './randomEffects.js';

export type EvidenceSource = 'bic' | 'cv';

export const EVIDENCE_DESCRIPTION: Record<EvidenceSource, string> = {
  bic: 'minus half the BIC (Schwarz approximation to the log marginal likelihood)',
  cv: 'cross-validated log-likelihood (sum over held-out folds)',
};

/** Two models whose log-likelihoods differ by less than this (nats) fit a participant identically. */
export const SAME_FIT_TOLERANCE = 1e-3;

export interface NestedPair {
  outer: string;
  inner: string;
  at: string;
}

export interface GroupOptions {
  candidates: readonly string[];
  evidence: EvidenceSource;
  /** Candidate pairs whose loss families nest (outer contains inner), by model name. */
  nested: readonly NestedPair[];
}

export interface ModelFitSummary {
  model: string;
  fitStatus: 'ok' | 'failed';
  note: string;
  logLikelihood: number | null;
  freeParameters: number;
  aic: number | null;
  aicc: number | null;
  bic: number | null;
  crossValidatedLogLikelihood: number | null;
  /** The likelihood is flat along some direction at the optimum (a parameter combination the data cannot fix). */
  flatDirection: boolean;
  /** Criterion value minus the best one (criterion units, −2 log L scale). */
  differenceToBest: number | null;
  /** Akaike/Schwarz weight exp(−Δ/2)/Σ exp(−Δ/2). */
  weight: number | null;
  parameters: { name: string; estimate: number; standardError: number | null; lower95: number | null; upper95: number | null; atBound: boolean }[];
  /** All trials together. */
  predictiveCheck: PredictiveCheck | null;
  /** One check per condition (designs with several conditions). */
  predictiveByCondition: PredictiveCheck[];
}

export interface ParticipantSummary {
  participant: string;
  trials: number;
  status: 'ok' | 'failed';
  error?: string;
  /** The chosen model, or 'undecided' (tied or within the margin), or 'failed'. */
  decision: string;
  /** Models within the tie tolerance or margin of the best, best first. */
  contenders: string[];
  /** Best and second-best model under the criterion (for the bootstrap). */
  best: string | null;
  runnerUp: string | null;
  models: ModelFitSummary[];
}

export interface RandomEffectsSummary {
  logEvidence: EvidenceSource;
  logEvidenceDescription: string;
  participantsUsed: number;
  participantsLeftOut: string[];
  models: string[];
  dirichletParameters: number[];
  expectedFrequency: number[];
  exceedanceProbability: number[];
  protectedExceedanceProbability: number[];
  bayesianOmnibusRisk: number;
  exceedanceMethod: string;
  converged: boolean;
}

export interface GroupSummary {
  criterion: string;
  participants: number;
  /** Participants won by each candidate, in candidate order, plus undecided and failed. */
  winnerCounts: { model: string; participants: number }[];
  undecided: number;
  failed: number;
  randomEffects: RandomEffectsSummary | null;
  warnings: string[];
}

export interface BootstrapSummary {
  participant: string;
  source: string;
  replicates: number;
  failed: number;
  /** Share of replicates whose comparison chose the participant's decision (best model). */
  choseParticipantsWinner: number | null;
  /** Share of replicates whose comparison chose the source model itself. */
  choseSource: number | null;
  undecided: number;
}

const sortByKey = <L extends { key: string }>(lines: readonly L[]) => [...lines].sort((a, b) => compareJobKeys(a.key, b.key));

function evidenceOf(line: ParticipantLine, model: string, source: EvidenceSource): number | null {
  const f = line.fits.find((x) => x.model === model);
  if (!f || f.status !== 'ok') return null;
  const v = source === 'bic' ? (isFiniteNumber(f.bic) ? -f.bic / 2 : null) : f.cvLogLikelihood ?? null;
  return isFiniteNumber(v) ? v : null;
}

export function participantSummary(line: ParticipantLine): ParticipantSummary {
  const cmp = line.comparison;
  const order = cmp
    ? line.fits
        .map((f) => f.model)
        .filter((m) => isFiniteNumber(cmp.delta[m]))
        .sort((a, b) => (cmp.delta[a] as number) - (cmp.delta[b] as number) || (a < b ? -1 : a > b ? 1 : 0))
    : [];
  const decision = line.status !== 'ok' || !cmp || cmp.status === 'failed' ? 'failed' : cmp.status === 'won' ? (cmp.winner as string) : 'undecided';
  return {
    participant: line.participant,
    trials: line.trials,
    status: line.status,
    ...(line.error ? { error: line.error } : {}),
    decision,
    contenders: cmp?.contenders ?? [],
    best: order[0] ?? null,
    runnerUp: order[1] ?? null,
    models: line.fits.map((f) => ({
      model: f.model,
      fitStatus: f.status,
      note: f.reason,
      logLikelihood: f.logLikelihood,
      freeParameters: f.k,
      aic: f.aic,
      aicc: f.aicc,
      bic: f.bic,
      crossValidatedLogLikelihood: f.cvLogLikelihood ?? null,
      flatDirection: f.flatDirection,
      differenceToBest: cmp?.delta[f.model] ?? null,
      weight: cmp?.weight[f.model] ?? null,
      parameters: f.parameters.map((p) => ({
        name: p.name,
        estimate: p.value,
        standardError: isFiniteNumber(p.se) ? p.se : null,
        lower95: isFiniteNumber(p.lower95) ? p.lower95 : null,
        upper95: isFiniteNumber(p.upper95) ? p.upper95 : null,
        atBound: p.atBound,
      })),
      predictiveCheck: line.predictive.find((c) => c.model === f.model && c.condition === null) ?? null,
      predictiveByCondition: line.predictive.filter((c) => c.model === f.model && c.condition !== null),
    })),
  };
}

/** Pairs of models with the same maximum likelihood for at least half the participants (at least two). */
function sameFitPairs(lines: readonly ParticipantLine[], candidates: readonly string[]): { a: string; b: string; participants: number }[] {
  const out: { a: string; b: string; participants: number }[] = [];
  const ok = lines.filter((l) => l.status === 'ok');
  for (let i = 0; i < candidates.length; i++)
    for (let j = i + 1; j < candidates.length; j++) {
      let same = 0;
      for (const l of ok) {
        const a = l.fits.find((f) => f.model === candidates[i])?.logLikelihood;
        const b = l.fits.find((f) => f.model === candidates[j])?.logLikelihood;
        if (isFiniteNumber(a) && isFiniteNumber(b) && Math.abs(a - b) < SAME_FIT_TOLERANCE) same++;
      }
      if (same >= 2 && 2 * same >= ok.length) out.push({ a: candidates[i], b: candidates[j], participants: same });
    }
  return out;
}

export function groupSummary(lines: readonly ParticipantLine[], criterion: string, options: GroupOptions): GroupSummary {
  const sorted = sortByKey(lines);
  const summaries = sorted.map(participantSummary);
  const winnerCounts = options.candidates.map((m) => ({ model: m, participants: summaries.filter((s) => s.decision === m).length }));
  const warnings: string[] = [];
  const used: number[][] = [];
  const leftOut: string[] = [];
  sorted.forEach((l) => {
    const row = options.candidates.map((m) => evidenceOf(l, m, options.evidence));
    if (row.every(isFiniteNumber)) used.push(row as number[]);
    else leftOut.push(l.participant);
  });
  let randomEffects: RandomEffectsSummary | null = null;
  if (options.candidates.length >= 2 && used.length >= 1) {
    const r = randomEffectsSelection(used);
    randomEffects = {
      logEvidence: options.evidence,
      logEvidenceDescription: EVIDENCE_DESCRIPTION[options.evidence],
      participantsUsed: used.length,
      participantsLeftOut: leftOut,
      models: [...options.candidates],
      dirichletParameters: r.dirichlet,
      expectedFrequency: r.expectedFrequency,
      exceedanceProbability: r.exceedance,
      protectedExceedanceProbability: r.protectedExceedance,
      bayesianOmnibusRisk: r.omnibusRisk,
      exceedanceMethod: r.exceedanceMethod === 'beta-cdf' ? 'exact (Beta cdf)' : 'numerical integration (Simpson)',
      converged: r.converged,
    };
    if (leftOut.length) warnings.push(`${leftOut.length} participant(s) left out of random-effects selection because a model's fit or evidence failed: ${leftOut.join(', ')}`);
  } else if (options.candidates.length >= 2) {
    warnings.push('random-effects selection skipped: no participant has a finite log-evidence for every model');
  }
  for (const p of sameFitPairs(sorted, options.candidates))
    warnings.push(
      `models '${p.a}' and '${p.b}' reach the same likelihood (within ${SAME_FIT_TOLERANCE} nats) for ${p.participants} of ${sorted.length} participants: this design cannot tell them apart, so they split the evidence and their exceedance probabilities mean nothing; read them as one model`,
    );
  for (const n of options.nested)
    warnings.push(
      `model '${n.outer}' contains '${n.inner}' (${n.at}): where the data sit near that point they share the evidence and differ only by the complexity penalty, so compare their exceedance probabilities with care (a recovery study, --recovery, says how often they are told apart)`,
    );
  const undecided = summaries.filter((s) => s.decision === 'undecided').length;
  const failed = summaries.filter((s) => s.decision === 'failed').length;
  return { criterion, participants: sorted.length, winnerCounts, undecided, failed, randomEffects, warnings };
}

export function bootstrapSummaries(lines: readonly BootstrapLine[], decisions: ReadonlyMap<string, string>): BootstrapSummary[] {
  const groups = new Map<string, BootstrapLine[]>();
  for (const l of sortByKey(lines)) {
    const k = `${l.participant}\u0000${l.source}`;
    groups.set(k, [...(groups.get(k) ?? []), l]);
  }
  return [...groups.values()].map((g) => {
    const ok = g.filter((l) => l.status === 'ok');
    const decision = decisions.get(g[0].participant);
    const share = (pred: (l: BootstrapLine) => boolean) => (ok.length ? ok.filter(pred).length / ok.length : null);
    return {
      participant: g[0].participant,
      source: g[0].source,
      replicates: g.length,
      failed: g.length - ok.length,
      choseParticipantsWinner: share((l) => l.comparisonStatus === 'won' && l.winner === decision),
      choseSource: share((l) => l.comparisonStatus === 'won' && l.winner === g[0].source),
      undecided: ok.filter((l) => l.comparisonStatus === 'tied' || l.comparisonStatus === 'undecided').length,
    };
  });
}
