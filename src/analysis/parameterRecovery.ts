/**
 * Parameter recovery: how well the generating model's own fit returns the
 * parameter values that produced each synthetic dataset.
 *
 * References: R. C. Wilson & A. G. E. Collins (2019), "Ten simple rules for
 * the computational modeling of behavioral data", eLife 8:e49547, rule 6
 * (true versus fitted parameters, their correlation); performance measures
 * bias, root mean squared error and coverage as defined in T. P. Morris,
 * I. R. White & M. J. Crowther (2019), "Using simulation studies to evaluate
 * statistical methods", Statistics in Medicine 38:2074–2102, Table 6.
 *
 * Only the fit of the generating model itself is used: the parameters of a
 * different model have no true value to compare with. Loss parameters are
 * also summarised by bins of their true value, because a loss exponent or
 * window is often recoverable in one part of its range and not in another
 * (e.g. a wide hit-or-miss window behaves like squared loss).
 */
import type { JobLine, ParameterLine } from './types.js';
import { isFiniteNumber } from './jsonSafe.js';
import { pearson, spearman } from './correlation.js';
import { proportion, type Proportion } from './wilson.js';
import { sortJobLines } from './jobKeys.js';

/** One job's view of one parameter. */
export interface RecoveryPoint {
  truth: number;
  fitted: number;
  /** 95% limits of the fit; null when the fit stage could not give them. */
  lower95: number | null;
  upper95: number | null;
  atBound: boolean;
}

export interface RecoveryStats {
  /** Jobs with a finite true and fitted value. */
  n: number;
  /** Correlation of true with fitted values. */
  pearson: number;
  spearman: number;
  /** Mean of fitted − true. */
  bias: number;
  /** √mean((fitted − true)²). */
  rmse: number;
  /** Fraction of jobs with lower95 ≤ true ≤ upper95, over jobs with a finite interval (n = coverage.n). */
  coverage: Proportion;
  /** Jobs left out of coverage because the interval was not finite. */
  intervalMissing: number;
  /** Jobs whose estimate sat at a bound of the parameter's range. */
  atBound: number;
}

export interface RecoveryBin extends RecoveryStats {
  /** Smallest and largest true value in the bin (bins never share a true value). */
  lower: number;
  upper: number;
}

export interface ParameterRecovery extends RecoveryStats {
  name: string;
  /** Jobs whose own fit succeeded but lacked a finite true or fitted value for this parameter. */
  missing: number;
  /** Quantile bins of the true value, for loss parameters ('loss.*'); null for the others. */
  bins: RecoveryBin[] | null;
}

export interface ModelRecovery {
  generating: string;
  /** Jobs of this generating model. */
  jobs: number;
  /** Jobs whose own fit succeeded (the ones summarised). */
  fitted: number;
  /** Jobs that failed, or whose own fit failed or is absent (e.g. the model is not a candidate). */
  fitFailed: number;
  /** Own fits that reported a flat direction of the likelihood. */
  flatDirection: number;
  parameters: ParameterRecovery[];
}

export interface RecoveryOptions {
  /** Number of quantile bins for loss parameters (default 4). */
  bins?: number;
}

export const DEFAULT_RECOVERY_BINS = 4;

/** Bias, RMSE, correlations and interval coverage of a set of points. Empty input gives NaN statistics. */
export function recoveryStats(points: readonly RecoveryPoint[]): RecoveryStats {
  const n = points.length;
  const truth = points.map((p) => p.truth);
  const fitted = points.map((p) => p.fitted);
  let errSum = 0;
  let sqSum = 0;
  for (const p of points) {
    const e = p.fitted - p.truth;
    errSum += e;
    sqSum += e * e;
  }
  let covered = 0;
  let withInterval = 0;
  for (const p of points) {
    if (!isFiniteNumber(p.lower95) || !isFiniteNumber(p.upper95)) continue;
    withInterval++;
    if (p.lower95 <= p.truth && p.truth <= p.upper95) covered++;
  }
  return {
    n,
    pearson: pearson(truth, fitted),
    spearman: spearman(truth, fitted),
    bias: n > 0 ? errSum / n : NaN,
    rmse: n > 0 ? Math.sqrt(sqSum / n) : NaN,
    coverage: proportion(covered, withInterval),
    intervalMissing: n - withInterval,
    atBound: points.filter((p) => p.atBound).length,
  };
}

/**
 * Split items into up to `bins` groups of near-equal size by rank of value
 * (empirical quantiles). Equal values always share a group, so a group
 * boundary moves forward past a run of ties and fewer groups may result.
 * The sort is stable, so groups keep the input order among equal values.
 */
export function quantileBins<T>(items: readonly T[], value: (item: T) => number, bins: number): T[][] {
  if (!(Number.isInteger(bins) && bins >= 1)) throw new RangeError(`bins must be an integer ≥ 1, got ${bins}`);
  const sorted = items.map((item, i) => ({ item, v: value(item), i })).sort((a, b) => a.v - b.v || a.i - b.i);
  const n = sorted.length;
  const out: T[][] = [];
  let start = 0;
  for (let b = 1; b <= bins && start < n; b++) {
    let end = b === bins ? n : Math.floor((b * n) / bins);
    if (end <= start) continue;
    while (end < n && sorted[end].v === sorted[end - 1].v) end++;
    out.push(sorted.slice(start, end).map((s) => s.item));
    start = end;
  }
  return out;
}

function isLossParameter(name: string): boolean {
  return name.startsWith('loss.');
}

/**
 * Recovery per generating model (in the order given) and per parameter of
 * its own fit (in the order the fits list them; a name first seen in a later
 * job goes after). Lines are put in key order first, so the sums do not
 * depend on the order they came in.
 */
export function parameterRecovery(lines: readonly JobLine[], generating: readonly string[], options: RecoveryOptions = {}): ModelRecovery[] {
  const nBins = options.bins ?? DEFAULT_RECOVERY_BINS;
  if (!(Number.isInteger(nBins) && nBins >= 1)) throw new RangeError(`bins must be an integer ≥ 1, got ${nBins}`);
  const sorted = sortJobLines(lines);
  return generating.map((g) => {
    const rows = sorted.filter((l) => l.generating === g);
    const own: { line: JobLine; params: ParameterLine[] }[] = [];
    let flat = 0;
    for (const line of rows) {
      if (line.status !== 'ok') continue;
      const fit = line.fits.find((f) => f.model === g);
      if (!fit || fit.status !== 'ok') continue;
      own.push({ line, params: fit.parameters });
      if (fit.flatDirection) flat++;
    }
    const names: string[] = [];
    for (const o of own) for (const p of o.params) if (!names.includes(p.name)) names.push(p.name);
    const parameters = names.map((name): ParameterRecovery => {
      const points: RecoveryPoint[] = [];
      for (const o of own) {
        const p = o.params.find((q) => q.name === name);
        const truth = o.line.truth[name];
        if (!p || !isFiniteNumber(truth) || !isFiniteNumber(p.value)) continue;
        points.push({
          truth,
          fitted: p.value,
          lower95: isFiniteNumber(p.lower95) ? p.lower95 : null,
          upper95: isFiniteNumber(p.upper95) ? p.upper95 : null,
          atBound: p.atBound === true,
        });
      }
      const bins = isLossParameter(name)
        ? quantileBins(points, (p) => p.truth, nBins).map((group) => ({
            lower: group[0].truth,
            upper: group[group.length - 1].truth,
            ...recoveryStats(group),
          }))
        : null;
      return { name, ...recoveryStats(points), missing: own.length - points.length, bins };
    });
    return { generating: g, jobs: rows.length, fitted: own.length, fitFailed: rows.length - own.length, flatDirection: flat, parameters };
  });
}
