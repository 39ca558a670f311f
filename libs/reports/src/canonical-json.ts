/** Decimal places every non-integer number of a report is rounded to. */
export const REPORT_DECIMALS = 6;

/**
 * The value with every number rounded to `decimals` places (−0 and
 * non-finite numbers become 0 and null), dates as ISO 8601 text, object keys
 * sorted and undefined members dropped: the same figures always give the
 * same bytes, whichever order the code happened to build them in.
 */
export function canonicalValue(value: unknown, decimals = REPORT_DECIMALS): unknown {
  if (!Number.isInteger(decimals) || decimals < 0 || decimals > 12)
    throw new RangeError(`decimals must be an integer in 0…12, got ${decimals}`);
  const scale = 10 ** decimals;
  const walk = (v: unknown): unknown => {
    if (v === null || typeof v === 'string' || typeof v === 'boolean') return v;
    if (typeof v === 'number') {
      if (!Number.isFinite(v)) return null;
      const r = Number.isInteger(v) ? v : Math.round(v * scale) / scale;
      return r === 0 ? 0 : r;
    }
    if (v instanceof Date) return v.toISOString();
    if (Array.isArray(v)) return v.map((x) => (x === undefined ? null : walk(x)));
    if (typeof v === 'object') {
      const out: Record<string, unknown> = {};
      for (const k of Object.keys(v).sort()) {
        const x = (v as Record<string, unknown>)[k];
        if (x !== undefined) out[k] = walk(x);
      }
      return out;
    }
    throw new TypeError(`canonicalValue: cannot serialise a ${typeof v}`);
  };
  return walk(value);
}

/** Canonical JSON text of `value` (see {@link canonicalValue}), indented by two spaces, ending in a newline. */
export function canonicalJson(value: unknown, decimals = REPORT_DECIMALS): string {
  return `${JSON.stringify(canonicalValue(value, decimals), null, 2)}\n`;
}
