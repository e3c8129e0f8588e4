/**
 * Outputs of `fit`: tidy CSV files built from the participant summaries (all
 * numbers in shortest round-trip form, so they read back exactly).
 * model-fits.csv is also what `grade --fits` reads: one row per participant and
 * model, a `chosen` column, and one column per parameter (with its 95% limits).
 */
import type { BootstrapSummary, GroupSummary, ParticipantSummary } from '../analysis/groupFit.js';
import type { WinnerAgainstRecovery } from '../analysis/recoveryLookup.js';
import { CHECK_PROBABILITIES } from '../analysis/predictiveCheck.js';
import { csvTable as csv } from './csv.js';

const parameterNames = (ps: readonly ParticipantSummary[]) => [...new Set(ps.flatMap((p) => p.models.flatMap((m) => m.parameters.map((q) => q.name))))].sort();

/** One row per (participant, model): fit, criteria, decision, predictive check, parameters. */
export function modelFitsCsv(ps: readonly ParticipantSummary[]): string {
  const names = parameterNames(ps);
  const rows: unknown[][] = [];
  for (const p of ps)
    for (const m of p.models) {
      const byName = new Map(m.parameters.map((q) => [q.name, q]));
      rows.push([
        p.participant, p.trials, m.model, m.fitStatus, m.model === p.decision, p.decision, m.logLikelihood, m.freeParameters, m.aic, m.aicc, m.bic,
        m.crossValidatedLogLikelihood, m.differenceToBest, m.weight, m.predictiveCheck?.ksDistance, m.predictiveCheck?.ksCritical5Percent, m.flatDirection,
        ...names.flatMap((n) => [byName.get(n)?.estimate, byName.get(n)?.lower95, byName.get(n)?.upper95]),
      ]);
    }
  return csv(
    ['participant', 'trials', 'model', 'fit_status', 'chosen', 'decision', 'log_likelihood', 'free_parameters', 'aic', 'aicc', 'bic', 'cv_log_likelihood', 'difference_to_best', 'weight', 'predictive_ks_distance', 'predictive_ks_critical_5_percent', 'flat_direction', ...names.flatMap((n) => [n, `${n}.lower95`, `${n}.upper95`])],
    rows,
  );
}

/** Long form: one row per (participant, model, parameter). */
export function parameterEstimatesCsv(ps: readonly ParticipantSummary[]): string {
  const rows: unknown[][] = [];
  for (const p of ps) for (const m of p.models) for (const q of m.parameters) rows.push([p.participant, m.model, m.model === p.decision, q.name, q.estimate, q.standardError, q.lower95, q.upper95, q.atBound]);
  return csv(['participant', 'model', 'chosen', 'parameter', 'estimate', 'standard_error', 'lower_95', 'upper_95', 'at_bound'], rows);
}

/** One row per participant: the decision, and what recovery and bootstrap say about it. */
export function participantsCsv(ps: readonly ParticipantSummary[], recovery: readonly WinnerAgainstRecovery[], boot: readonly BootstrapSummary[]): string {
  const rec = new Map(recovery.map((r) => [r.participant, r]));
  const rows = ps.map((p) => {
    const r = rec.get(p.participant);
    const b = boot.find((x) => x.participant === p.participant && x.source === p.best);
    return [p.participant, p.trials, p.decision, p.contenders.join(' '), p.best, p.runnerUp, r?.recoveryTrials, r?.choiceRightInSimulation, b?.replicates, b?.choseSource];
  });
  return csv(['participant', 'trials', 'decision', 'contenders', 'best', 'runner_up', 'recovery_trials', 'choice_right_in_simulation', 'bootstrap_replicates', 'bootstrap_same_choice'], rows);
}

/** One row per candidate: winner counts and the random-effects selection. */
export function groupCsv(g: GroupSummary): string {
  const re = g.randomEffects;
  const rows = g.winnerCounts.map((w, i) => [w.model, w.participants, re?.expectedFrequency[i], re?.exceedanceProbability[i], re?.protectedExceedanceProbability[i], re?.bayesianOmnibusRisk, re?.logEvidence]);
  return csv(['model', 'participants_won', 'expected_frequency', 'exceedance_probability', 'protected_exceedance_probability', 'bayesian_omnibus_risk', 'log_evidence'], rows);
}

/** One row per (participant, model, condition or 'all', probability): observed and simulated response-error quantiles. */
export function predictiveChecksCsv(ps: readonly ParticipantSummary[]): string {
  const rows: unknown[][] = [];
  for (const p of ps)
    for (const m of p.models)
      for (const c of [...(m.predictiveCheck ? [m.predictiveCheck] : []), ...m.predictiveByCondition])
        CHECK_PROBABILITIES.forEach((q, i) => rows.push([p.participant, m.model, c.condition ?? 'all', q, c.observedErrorQuantiles[i], c.simulatedErrorQuantiles[i], c.ksDistance, c.ksCritical5Percent]));
  return csv(['participant', 'model', 'condition', 'probability', 'observed_error_quantile', 'simulated_error_quantile', 'ks_distance', 'ks_critical_5_percent'], rows);
}

/** Parameter-draw file for a scenario's generate.drawFile: one row per (participant, model) with an ok fit. */
export function drawFileCsv(ps: readonly ParticipantSummary[]): string {
  const names = parameterNames(ps);
  const rows: unknown[][] = [];
  for (const p of ps)
    for (const m of p.models) {
      if (m.fitStatus !== 'ok') continue;
      const byName = new Map(m.parameters.map((q) => [q.name, q.estimate]));
      rows.push([p.participant, m.model, ...names.map((n) => byName.get(n))]);
    }
  return csv(['participant', 'model', ...names], rows);
}

export function bootstrapCsv(boot: readonly BootstrapSummary[]): string {
  return csv(
    ['participant', 'source_model', 'replicates', 'failed', 'chose_participants_winner', 'chose_source_model', 'undecided'],
    boot.map((b) => [b.participant, b.source, b.replicates, b.failed, b.choseParticipantsWinner, b.choseSource, b.undecided]),
  );
}
