/**
 * The planned group analysis of one study and whether its conclusion is the
 * correct one (the population's true majority model).
 *
 *  - random-effects: variational random-effects model selection (Stephan et
 *    al. 2009, NeuroImage 46:1004–1017) on the participants' log-evidence,
 *    with exceedance and protected exceedance probabilities (Rigoux et al.
 *    2014, NeuroImage 84:971–985), computed by ./randomEffects.ts. The
 *    conclusion names model k when its (protected) exceedance probability is
 *    above the threshold.
 *  - winner-count: each participant's own comparison chooses a model (tied or
 *    undecided participants count for nobody); the conclusion names the model
 *    that wins more participants than any other, provided it wins more than
 *    the minimum share of all participants.
 *
 * A conclusion is 'correct' (it names the true majority model), 'wrong' (it
 * names another model) or 'none' (no model meets the rule).
 */
import { randomEffectsSelection } from './randomEffects.js';

export type GroupAnalysis =
  | { method: 'random-effects'; rule: 'protected-exceedance' | 'exceedance'; threshold: number }
  | { method: 'winner-count'; minimumShare: number };

export interface StudyRow {
  evidence: readonly number[];
  winner: string | null;
}

export interface GroupVerdict {
  kind: 'correct' | 'wrong' | 'none';
  /** The majority model's score: its (protected) exceedance probability, or its share of participants won. */
  score: number;
}

export function groupVerdict(rows: readonly StudyRow[], candidates: readonly string[], majority: string, analysis: GroupAnalysis): GroupVerdict {
  const m = candidates.indexOf(majority);
  if (m < 0) throw new Error(`majority model '${majority}' is not among the candidates`);
  let scores: number[];
  let passes: (k: number) => boolean;
  if (analysis.method === 'random-effects') {
    const sel = randomEffectsSelection(rows.map((r) => r.evidence));
    scores = analysis.rule === 'protected-exceedance' ? sel.protectedExceedance : sel.exceedance;
    passes = (k) => scores[k] > analysis.threshold;
  } else {
    const wins = candidates.map((c) => rows.filter((r) => r.winner === c).length);
    scores = wins.map((w) => w / rows.length);
    passes = (k) => wins.every((w, j) => j === k || wins[k] > w) && scores[k] > analysis.minimumShare;
  }
  const kind = passes(m) ? 'correct' : candidates.some((_, k) => k !== m && passes(k)) ? 'wrong' : 'none';
  return { kind, score: scores[m] };
}
