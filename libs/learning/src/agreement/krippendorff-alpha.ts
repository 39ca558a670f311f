/** Metric of Krippendorff's alpha: how far apart two values are (δ²). */
export type AlphaLevel = 'nominal' | 'ordinal' | 'interval';

/** A units × observers table: `table[u][o]` is observer o's value for unit u, null or undefined when missing. */
export type ReliabilityTable<V extends string | number = string | number> = readonly (readonly (
  V | null | undefined
)[])[];

/** Krippendorff's alpha with the figures behind it. */
export interface KrippendorffAlpha {
  /** 1 − D_o / D_e; NaN when D_e = 0 (fewer than two pairable values, or no variation at all). */
  alpha: number;
  observedDisagreement: number;
  expectedDisagreement: number;
  /** n: values in units with two or more values (the pairable values). */
  pairableValues: number;
  /** Units with two or more values. */
  pairableUnits: number;
  /** Distinct values seen in pairable units, sorted (numbers ascending, strings by code unit). */
  values: Array<string | number>;
}

/**
 * The table reduced to what alpha needs: per pairable unit, how often each
 * distinct value occurs. Bootstrap resamples reuse it.
 */
export interface ValueCounts {
  level: AlphaLevel;
  values: Array<string | number>;
  /** Per pairable unit: parallel arrays of value indices and their counts (m_u ≥ 2 in total). */
  units: Array<{ index: Int32Array; count: Int32Array; m: number }>;
}

/** Checks the table and counts values per unit; units with fewer than two values are dropped (not pairable). */
export function countValues(table: ReliabilityTable, level: AlphaLevel = 'nominal'): ValueCounts {
  if (!['nominal', 'ordinal', 'interval'].includes(level))
    throw new RangeError(`level must be nominal, ordinal or interval, got ${level}`);
  if (!Array.isArray(table)) throw new TypeError("table must be an array of units, each an array of observers' values");
  let observers = -1;
  const perUnit: Array<Array<string | number>> = [];
  const distinct = new Set<string | number>();
  table.forEach((unit, u) => {
    if (!Array.isArray(unit)) throw new TypeError(`table[${u}] must be an array of observers' values`);
    if (observers === -1) observers = unit.length;
    else if (unit.length !== observers)
      throw new RangeError(`table is ragged: unit 0 has ${observers} observers, unit ${u} has ${unit.length}`);
    const present: Array<string | number> = [];
    // Array.isArray above narrowed the readonly rows to any[]: their cells are values again here.
    unit.forEach((v: string | number | null | undefined, o) => {
      if (v === null || v === undefined) return;
      const numeric = typeof v === 'number' && Number.isFinite(v);
      if (level === 'nominal' ? !(numeric || typeof v === 'string') : !numeric) {
        throw new TypeError(
          `table[${u}][${o}] must be ${level === 'nominal' ? 'a string or finite number' : 'a finite number'} or null, got ${String(v)}`,
        );
      }
      present.push(v);
    });
    if (present.length >= 2) {
      perUnit.push(present);
      for (const v of present) distinct.add(v);
    }
  });
  if (observers < 2) throw new RangeError(`table needs at least two observers per unit, got ${Math.max(observers, 0)}`);
  const kinds = new Set([...distinct].map((v) => typeof v));
  if (kinds.size > 1) throw new TypeError('table mixes string and number values');
  const values = [...distinct].sort((a, b) => (typeof a === 'number' ? a - (b as number) : a < b ? -1 : a > b ? 1 : 0));
  const at = new Map(values.map((v, i) => [v, i]));
  const units = perUnit.map((present) => {
    const tally = new Map<number, number>();
    for (const v of present) {
      const key = at.get(v)!;
      tally.set(key, (tally.get(key) ?? 0) + 1);
    }
    const keys = [...tally.keys()].sort((a, b) => a - b);
    return { index: Int32Array.from(keys), count: Int32Array.from(keys, (key) => tally.get(key)!), m: present.length };
  });
  return { level, values, units };
}

/**
 * Adds unit contributions to a coincidence matrix (Krippendorff 2011,
 * "Computing Krippendorff's Alpha-Reliability", section C):
 * o_ck += n_uc (n_uk − [c = k]) / (m_u − 1). `weights[u]` is how many times
 * unit u is taken (1 for the table itself, bootstrap multiplicities else).
 */
export function addCoincidences(counts: ValueCounts, weights: ArrayLike<number> | null, into: Float64Array): void {
  const v = counts.values.length;
  counts.units.forEach((unit, u) => {
    const w = weights ? weights[u] : 1;
    if (w === 0) return;
    const scale = w / (unit.m - 1);
    for (let a = 0; a < unit.index.length; a++) {
      const c = unit.index[a];
      const nc = unit.count[a];
      for (let b = 0; b < unit.index.length; b++) {
        const k = unit.index[b];
        into[c * v + k] += scale * nc * (a === b ? nc - 1 : unit.count[b]);
      }
    }
  });
}

/**
 * Alpha from a coincidence matrix (Krippendorff 2011, section C):
 * α = 1 − D_o / D_e with D_o = Σ_c Σ_k o_ck δ²_ck / n and
 * D_e = Σ_c Σ_k n_c n_k δ²_ck / (n (n − 1)). δ² is 0/1 for nominal data,
 * (c − k)² for interval data, and for ordinal data
 * (Σ_{g=c..k} n_g − (n_c + n_k)/2)² over the values in rank order.
 */
export function alphaFromCoincidences(
  o: Float64Array,
  values: ReadonlyArray<string | number>,
  level: AlphaLevel,
): { alpha: number; observed: number; expected: number; n: number } {
  const v = values.length;
  const margins = new Float64Array(v);
  let n = 0;
  for (let c = 0; c < v; c++) for (let k = 0; k < v; k++) margins[c] += o[c * v + k];
  for (let c = 0; c < v; c++) n += margins[c];
  const cumulative = new Float64Array(v + 1);
  for (let c = 0; c < v; c++) cumulative[c + 1] = cumulative[c] + margins[c];
  const delta = (c: number, k: number): number => {
    if (c === k) return 0;
    if (level === 'nominal') return 1;
    if (level === 'interval') return ((values[c] as number) - (values[k] as number)) ** 2;
    const lo = Math.min(c, k);
    const hi = Math.max(c, k);
    return (cumulative[hi + 1] - cumulative[lo] - (margins[c] + margins[k]) / 2) ** 2;
  };
  let observedSum = 0;
  let expectedSum = 0;
  for (let c = 0; c < v; c++) {
    for (let k = 0; k < v; k++) {
      if (c === k) continue;
      const d = delta(c, k);
      observedSum += o[c * v + k] * d;
      expectedSum += margins[c] * margins[k] * d;
    }
  }
  const observed = n > 0 ? observedSum / n : Number.NaN;
  const expected = n > 1 ? expectedSum / (n * (n - 1)) : Number.NaN;
  return { alpha: expected > 0 ? 1 - observed / expected : Number.NaN, observed, expected, n };
}

/**
 * Krippendorff's alpha (Krippendorff 2011, "Computing Krippendorff's
 * Alpha-Reliability", sections A–C; Hayes & Krippendorff 2007) for a
 * units × observers table with missing values: units with fewer than two
 * values are not pairable and do not count.
 */
export function krippendorffAlpha(table: ReliabilityTable, level: AlphaLevel = 'nominal'): KrippendorffAlpha {
  const counts = countValues(table, level);
  return alphaOfCounts(counts);
}

/** Alpha of already counted values (see {@link countValues}). */
export function alphaOfCounts(counts: ValueCounts): KrippendorffAlpha {
  const o = new Float64Array(counts.values.length ** 2);
  addCoincidences(counts, null, o);
  const r = alphaFromCoincidences(o, counts.values, counts.level);
  return {
    alpha: r.alpha,
    observedDisagreement: r.observed,
    expectedDisagreement: r.expected,
    pairableValues: counts.units.reduce((s, u) => s + u.m, 0),
    pairableUnits: counts.units.length,
    values: [...counts.values],
  };
}
