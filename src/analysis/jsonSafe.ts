/**
 * JSON-safe copies of analysis results.
 *
 * Reference: RFC 8259 (The JavaScript Object Notation Data Interchange Format,
 * 2017), §6: "Numeric values that cannot be represented ... (such as Infinity
 * and NaN) are not permitted." JSON.stringify writes them as null silently,
 * while other writers (Python's json module) emit the non-standard tokens NaN
 * and Infinity. Converting explicitly makes the null visible in the types and
 * gives the same file whatever wrote it.
 */

/** The type of `jsonSafe(value)`: every number may have become null. */
export type JsonSafe<T> = T extends number
  ? number | null
  : T extends string | boolean | null | undefined
    ? T
    : T extends readonly (infer U)[]
      ? JsonSafe<U>[]
      : T extends object
        ? { [K in keyof T]: JsonSafe<T[K]> }
        : T;

/**
 * Deep copy with NaN and ±Infinity replaced by null and −0 by 0 (JSON has no
 * negative zero, and deep-equality checks tell them apart). Object properties
 * holding undefined are dropped, as JSON.stringify would. Anything that is
 * not plain data (Map, Date, class instances, functions) is an error rather
 * than a silent `{}` in the written file.
 */
export function jsonSafe<T>(value: T): JsonSafe<T> {
  return convert(value, '$') as JsonSafe<T>;
}

function convert(value: unknown, path: string): unknown {
  if (typeof value === 'number') return Number.isFinite(value) ? (value === 0 ? 0 : value) : null;
  if (value === null || typeof value === 'string' || typeof value === 'boolean') return value;
  if (value === undefined) return undefined;
  // JSON.stringify writes undefined array entries as null; do the same so the copy round-trips.
  if (Array.isArray(value)) return value.map((v, i) => (v === undefined ? null : convert(v, `${path}[${i}]`)));
  if (typeof value === 'object') {
    const proto = Object.getPrototypeOf(value) as unknown;
    if (proto !== Object.prototype && proto !== null) {
      const name = (value as { constructor?: { name?: string } }).constructor?.name ?? 'object';
      throw new TypeError(`${path}: a ${name} is not JSON data`);
    }
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) {
      if (v !== undefined) out[k] = convert(v, `${path}.${k}`);
    }
    return out;
  }
  throw new TypeError(`${path}: a ${typeof value} is not JSON data`);
}

/** True for a number that is neither NaN nor infinite. Job lines hold null where the fit stage had NaN. */
export function isFiniteNumber(value: unknown): value is number {
  return typeof value === 'number' && Number.isFinite(value);
}
