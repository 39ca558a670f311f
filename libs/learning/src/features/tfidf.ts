import type { IdfTable } from './idf-table.js';
import type { SparseVector } from './sparse-vector.js';

export interface TfidfOptions {
  /** Replace tf by 1 + ln(tf) (default true). */
  sublinearTf?: boolean;
}

/**
 * TF-IDF weighting of hashed counts, as scikit-learn's TfidfTransformer
 * documents it: w(t) = tf'(t) · idf(t), tf' = 1 + ln(tf) with sublinear tf
 * (else tf), idf smoothed (see {@link IdfTable}), then the row divided by its
 * Euclidean norm (L2 normalisation; a zero row stays zero).
 */
export function tfidf(counts: SparseVector, idf: IdfTable, options: TfidfOptions = {}): SparseVector {
  const sublinear = options.sublinearTf ?? true;
  const { indices } = counts;
  const values = new Float64Array(indices.length);
  let norm = 0;
  for (let i = 0; i < indices.length; i++) {
    const tf = counts.values[i];
    if (!(tf >= 0)) throw new RangeError(`counts.values[${i}] must be a non-negative count, got ${tf}`);
    if (indices[i] < 0 || indices[i] >= idf.dimension) {
      throw new RangeError(`counts.indices[${i}] = ${indices[i]} is outside the idf table's 0…${idf.dimension - 1}`);
    }
    const w = (tf === 0 ? 0 : sublinear ? 1 + Math.log(tf) : tf) * idf.idf(indices[i]);
    values[i] = w;
    norm += w * w;
  }
  if (norm > 0) {
    const inv = 1 / Math.sqrt(norm);
    for (let i = 0; i < values.length; i++) values[i] *= inv;
  }
  return { indices: indices.slice(), values };
}
