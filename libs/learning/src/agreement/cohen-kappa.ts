import { assertCountTable } from './count-checks.js';

/** Cohen's kappa with the figures behind it. */
export interface CohenKappa {
  /** (p_o − p_e) / (1 − p_e); NaN when p_e = 1 (both raters used one and the same category throughout). */
  kappa: number;
  /** Observed agreement: the share of items on the diagonal. */
  observed: number;
  /** Agreement expected by chance from the two raters' margins. */
  expected: number;
  /** Items rated by both. */
  n: number;
}

/**
 * Cohen's kappa (Cohen 1960, "A coefficient of agreement for nominal
 * scales", eq. 1) from a square confusion matrix of two raters' counts (rows
 * one rater, columns the other): κ = (p_o − p_e) / (1 − p_e), with
 * p_o = Σ_i n_ii / N and p_e = Σ_i n_i· n_·i / N².
 */
export function cohenKappaFromMatrix(matrix: readonly (readonly number[])[]): CohenKappa {
  const k = assertCountTable(matrix, 'matrix', 1, 1);
  if (k !== matrix.length) throw new RangeError(`matrix must be square, got ${matrix.length} rows of ${k}`);
  let n = 0;
  let diagonal = 0;
  const rows = new Float64Array(k);
  const cols = new Float64Array(k);
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < k; j++) {
      const v = matrix[i][j];
      n += v;
      rows[i] += v;
      cols[j] += v;
      if (i === j) diagonal += v;
    }
  }
  if (n === 0) throw new RangeError('matrix must hold at least one rated item, its counts sum to 0');
  let chance = 0;
  for (let i = 0; i < k; i++) chance += rows[i] * cols[i];
  const observed = diagonal / n;
  const expected = chance / (n * n);
  return { kappa: expected === 1 ? Number.NaN : (observed - expected) / (1 - expected), observed, expected, n };
}

/**
 * Cohen's kappa (Cohen 1960) from two raters' labels on the same items,
 * `a[i]` and `b[i]` being their labels of item i. Labels are compared with
 * `===`; the categories are those either rater used.
 */
export function cohenKappa<T extends string | number>(a: readonly T[], b: readonly T[]): CohenKappa {
  if (!Array.isArray(a)) throw new TypeError('a must be an array of labels');
  if (!Array.isArray(b)) throw new TypeError('b must be an array of labels');
  if (a.length !== b.length) throw new RangeError(`a and b must have the same length, got ${a.length} and ${b.length}`);
  if (a.length === 0) throw new RangeError('a and b must hold at least one item');
  const index = new Map<T, number>();
  const check = (label: T, name: string, i: number): number => {
    if (typeof label !== 'string' && !(typeof label === 'number' && Number.isFinite(label))) {
      throw new TypeError(`${name}[${i}] must be a string or finite number label, got ${String(label)}`);
    }
    let at = index.get(label);
    if (at === undefined) index.set(label, (at = index.size));
    return at;
  };
  // Array.isArray above narrowed the readonly arrays to any[]: their elements are labels again here.
  const pairs = a.map((x: T, i) => [check(x, 'a', i), check(b[i] as T, 'b', i)] as const);
  const matrix = Array.from({ length: index.size }, () => new Array<number>(index.size).fill(0));
  for (const [i, j] of pairs) matrix[i][j] += 1;
  return cohenKappaFromMatrix(matrix);
}
