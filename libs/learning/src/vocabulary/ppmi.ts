import { assertSparseMatrix, type SparseMatrix } from './sparse-matrix.js';

/** Default context-distribution smoothing exponent (Levy, Goldberg & Dagan 2015). */
export const DEFAULT_CONTEXT_SMOOTHING = 0.75;

export interface PpmiOptions {
  /**
   * Exponent α applied to the context counts before they are normalised,
   * in (0, 1]; 1 is the plain PPMI of Church & Hanks. Default
   * {@link DEFAULT_CONTEXT_SMOOTHING}.
   */
  alpha?: number;
}

/**
 * Positive pointwise mutual information of a word × context count matrix
 * (Church & Hanks 1990, "Word association norms, mutual information, and
 * lexicography"), with context-distribution smoothing (Levy, Goldberg & Dagan
 * 2015, "Improving distributional similarity with lessons learned from word
 * embeddings", TACL 3):
 *
 *   PPMI_α(w, c) = max(0, log2( P(w, c) / (P(w) · P_α(c)) )),
 *   P(w, c) = f(w, c) / N,  P(w) = Σ_c f(w, c) / N,  P_α(c) = f(c)^α / Σ_c' f(c')^α,
 *
 * where f(c) = Σ_w f(w, c) and N = Σ f. Raising context counts to α < 1 gives
 * rare contexts a larger share of probability, which lowers the PMI that rare
 * contexts otherwise inflate. Cells with a zero count (PMI −∞) and cells with a
 * negative PMI are left out of the result, which keeps the input's shape.
 *
 * @param counts non-negative co-occurrence counts, rows = words, columns = contexts.
 * @throws RangeError for a negative count or α outside (0, 1].
 */
export function ppmi(counts: SparseMatrix, options: PpmiOptions = {}): SparseMatrix {
  assertSparseMatrix(counts, 'counts');
  const alpha = options.alpha ?? DEFAULT_CONTEXT_SMOOTHING;
  if (!(alpha > 0 && alpha <= 1)) throw new RangeError(`alpha must be in (0, 1], got ${alpha}`);
  const rowSum = new Float64Array(counts.rows);
  const columnSum = new Float64Array(counts.columns);
  for (let r = 0; r < counts.rows; r++) {
    for (let k = counts.rowStart[r]; k < counts.rowStart[r + 1]; k++) {
      const f = counts.values[k];
      if (f < 0) throw new RangeError(`counts must be non-negative, got ${f} in row ${r}`);
      rowSum[r] += f;
      columnSum[counts.columnIndex[k]] += f;
    }
  }
  let smoothedTotal = 0;
  const contextProbability = new Float64Array(counts.columns);
  for (let c = 0; c < counts.columns; c++) {
    contextProbability[c] = columnSum[c] > 0 ? Math.pow(columnSum[c], alpha) : 0;
    smoothedTotal += contextProbability[c];
  }
  for (let c = 0; c < counts.columns; c++) contextProbability[c] /= smoothedTotal;

  // P(w,c) / (P(w) P_α(c)) = f(w,c) / (f(w) P_α(c)): N cancels.
  const rowStart = new Int32Array(counts.rows + 1);
  const columnIndex = new Int32Array(counts.values.length);
  const values = new Float64Array(counts.values.length);
  let n = 0;
  for (let r = 0; r < counts.rows; r++) {
    for (let k = counts.rowStart[r]; k < counts.rowStart[r + 1]; k++) {
      const f = counts.values[k];
      if (f === 0) continue;
      const c = counts.columnIndex[k];
      const pmi = Math.log2(f / (rowSum[r] * contextProbability[c]));
      if (pmi > 0) {
        columnIndex[n] = c;
        values[n++] = pmi;
      }
    }
    rowStart[r + 1] = n;
  }
  return {
    rows: counts.rows,
    columns: counts.columns,
    rowStart,
    columnIndex: columnIndex.slice(0, n),
    values: values.slice(0, n),
  };
}
