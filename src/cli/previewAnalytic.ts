/**
 * The analytic half of `lossprobe preview`: runs the analytic preview on the
 * base design and every variant, prints the distinguishability matrix, the
 * pair verdicts, predicted standard errors and the predicted trials needed,
 * and ranks the variants side by side.
 */
import Table from 'cli-table3';
import type { Scenario } from '../scenario/schema.js';
import { designVariants } from '../scenario/variants.js';
import { candidatesOf } from '../engine/resolve.js';
import { analyticPreview, PREVIEW_VERSION } from '../design/analyticPreview.js';
import { jsonSafe } from '../analysis/jsonSafe.js';
import {
  distinguishabilityCsv,
  fisherCsv,
  predictedAccuracyCsv,
  predictedAccuracyFigure,
  responseMomentsCsv,
  responseMomentsFigure,
  type DesignPreview,
} from '../report/previewOutputs.js';

const CAUTION =
  'These predictions hold only under the model and parameters assumed (a normal approximation for the accuracy); check them with `lossprobe size`. A simulation or preview complements, not replaces, a pilot study and the advice of your ethics board and statistician.';

export function previewDesigns(s: Scenario, source: string, target: number): DesignPreview[] {
  return designVariants(s, source).map(({ variant, scenario }) => {
    const candidates = candidatesOf(scenario, source);
    const generating = scenario.generate.models ?? scenario.models.map((m) => m.name);
    return { variant, analytic: analyticPreview(scenario, candidates, generating, { target }) };
  });
}

export async function analyticFiles(designs: DesignPreview[]): Promise<Record<string, string>> {
  if (!designs.length) return {};
  const files: Record<string, string> = {
    'preview.json': JSON.stringify(jsonSafe({ version: PREVIEW_VERSION, caution: CAUTION, designs }), null, 2) + '\n',
    'distinguishability.csv': distinguishabilityCsv(designs),
    'predicted-accuracy.csv': predictedAccuracyCsv(designs),
    'response-moments.csv': responseMomentsCsv(designs),
    'predicted-se.csv': fisherCsv(designs),
  };
  for (const d of designs) {
    const prefix = d.variant === 'base' ? '' : `${d.variant}-`;
    files[`${prefix}predicted-accuracy.svg`] = await predictedAccuracyFigure(d);
    for (const c of [...new Set(d.analytic.responseMoments.map((m) => m.condition))]) files[`${prefix}response-moments-${c}.svg`] = await responseMomentsFigure(d, c);
  }
  return files;
}

const plain = { style: { head: [], border: [] }, chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' } };
const nats = (x: number | null) => (x === null ? '–' : x < 1e-5 ? '0' : x >= 0.01 ? x.toFixed(3) : x.toExponential(1));
const se = (x: number | null) => (x === null ? '–' : Math.abs(x) >= 0.01 ? x.toPrecision(3) : x.toExponential(2));

export function printAnalytic(designs: DesignPreview[]): void {
  for (const d of designs) {
    const a = d.analytic;
    console.log(`\nDistinguishability${d.variant === 'base' ? '' : ` (variant '${d.variant}')`}: smallest KL divergence per trial (nats) from the generating model (row) to each candidate (column), over the candidate's parameters`);
    const t = new Table({ head: ['generating ↓ / candidate →', ...a.divergence.columns], ...plain });
    a.divergence.rows.forEach((r, i) => t.push([r, ...a.divergence.kl[i].map((v, j) => (a.divergence.columns[j] === r ? '·' : nats(v)))]));
    console.log(t.toString());
    for (const st of a.statements) console.log(`  ${st}`);
    console.log(
      `  Predicted trials per observer for ${Math.round(100 * a.predicted.target)}% correct choices: ${a.generating.map((g) => `${g} ${a.predicted.trialsNeeded[g] ?? 'never (within 20000)'}`).join(', ')}.`,
    );
    for (const cond of [...new Set(a.responseMoments.map((m) => m.condition))]) {
      const xs = [...new Set(a.responseMoments.filter((m) => m.condition === cond).map((m) => m.stimulus))];
      // Five of the stimulus nodes, spread over the distribution.
      const pick = [...new Set([0.1, 0.3, 0.5, 0.7, 0.9].map((q) => xs[Math.min(xs.length - 1, Math.floor(q * xs.length))]))];
      const m = new Table({ head: [`${cond}: stimulus`, ...a.generating.map((g) => `${g}: mean ± sd`)], ...plain });
      for (const x of pick)
        m.push([se(x), ...a.generating.map((g) => {
          const r = a.responseMoments.find((q) => q.model === g && q.condition === cond && q.stimulus === x)!;
          return `${se(r.mean)} ± ${se(r.sd)}`;
        })]);
      console.log(`Predicted response by stimulus (${cond}):`);
      console.log(m.toString());
    }
    const f = new Table({ head: ['model', 'parameter', 'typical value', `predicted SE at ${a.fisher[0]?.trials ?? '?'} trials`], ...plain });
    for (const m of a.fisher) m.parameters.forEach((p, i) => f.push([m.model, p, se(a.typical[m.model][p]), se(m.se[i])]));
    if (a.fisher.length) console.log(f.toString());
  }
  if (designs.length > 1) {
    console.log(`\nDesigns side by side (predicted trials per observer for ${Math.round(100 * designs[0].analytic.predicted.target)}% correct choices; ranked, fewest first):`);
    const gens = [...new Set(designs.flatMap((d) => d.analytic.generating))];
    const ranked = [...designs].sort((x, y) => (x.analytic.predicted.trialsNeededAll ?? Infinity) - (y.analytic.predicted.trialsNeededAll ?? Infinity));
    const t = new Table({ head: ['design', ...gens.map((g) => `${g}`), 'all models', 'equivalent pairs'], ...plain });
    for (const d of ranked)
      t.push([
        d.variant,
        ...gens.map((g) => (g in d.analytic.predicted.trialsNeeded ? String(d.analytic.predicted.trialsNeeded[g] ?? 'never') : '–')),
        String(d.analytic.predicted.trialsNeededAll ?? 'never'),
        String(d.analytic.pairs.filter((p) => p.label === 'equivalent').length),
      ]);
    console.log(t.toString());
  }
  if (designs.length) console.log(`\n${CAUTION}`);
}
