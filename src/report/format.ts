/**
 * The one number formatter of every report, table and figure label: each
 * number a reader sees goes through formatNumber, so the same value always
 * looks the same and tests can recompute every displayed number from the
 * raw value (test/reportHtml.test.ts).
 *
 * Styles:
 * - percent: a share in [0, 1] as a whole percent; shares that round to 0 or
 *   100 without being so read "<1%" and ">99%", so a rare failure is never
 *   shown as none and a near-certain recovery never as certain.
 * - count: a whole number with thousands separators.
 * - id: a whole number that names something (a seed): digits only.
 * - value: a measured quantity, three significant digits, exponent notation
 *   outside [0.001, 100000).
 * - correlation: two decimals.
 * Missing values (null, NaN, ±Infinity) read "–".
 * Negative numbers use the typographic minus sign (U+2212).
 */
export type NumberStyle = 'percent' | 'count' | 'id' | 'value' | 'correlation';

export const NUMBER_STYLES: readonly NumberStyle[] = ['percent', 'count', 'id', 'value', 'correlation'];

export const MISSING = '–';

const minus = (s: string) => s.replace(/^-/, '−');

export function formatNumber(value: number | null | undefined, style: NumberStyle): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return MISSING;
  switch (style) {
    case 'percent': {
      if (value > 0 && value < 0.005) return '<1%';
      if (value < 1 && value >= 0.995) return '>99%';
      return `${minus(String(Math.round(value * 100)))}%`;
    }
    case 'count':
      return minus(Math.round(value).toLocaleString('en-US'));
    case 'id':
      return minus(String(Math.round(value)));
    case 'correlation': {
      const s = value.toFixed(2);
      return minus(s === '-0.00' ? '0.00' : s);
    }
    case 'value': {
      if (value === 0) return '0';
      const a = Math.abs(value);
      if (a < 1e-3 || a >= 1e5) return minus(value.toExponential(2).replace(/\.?0+e/, 'e'));
      // toPrecision keeps trailing zeros ("1.40"); a plain number reads calmer.
      return minus(String(Number(value.toPrecision(3))));
    }
  }
}
