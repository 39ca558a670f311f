import { assertSparseMatrix, type SparseMatrix } from './sparse-matrix.js';

export interface SimilarRow {
  /** Row index in the matrix. */
  row: number;
  /** Mean cosine similarity to the seed rows, in [-1, 1] (in [0, 1] for PPMI rows). */
  similarity: number;
}

export interface SimilarityOptions {
  /** Most rows returned. */
  limit: number;
  /** Rows never returned (besides the seed rows themselves), e.g. dismissed or too rare words. */
  exclude?: (row: number) => boolean;
}

/**
 * Ranks the rows of a matrix (words as PPMI vectors) by their mean cosine
 * similarity to a set of seed rows (the vector-space similarity of Salton et
 * al. 1975; on PPMI rows as in Jurafsky & Martin, Speech and Language
 * Processing, ch. "Vector Semantics and Embeddings"):
 *
 *   score(w) = (1/k) Σ_s cos(w, s) = (w · c) / |w|,  c = (1/k) Σ_s s / |s|,
 *
 * computed in one pass over the matrix with the dense centroid c. Seed rows
 * with no entries are ignored; with none left the answer is empty. Rows with
 * a similarity of 0 are left out. Ties go to the lower row index.
 *
 * @throws RangeError for a seed row outside the matrix or a bad limit.
 */
export function rankBySimilarity(
  matrix: SparseMatrix,
  seedRows: readonly number[],
  options: SimilarityOptions,
): SimilarRow[] {
  assertSparseMatrix(matrix, 'matrix');
  const { limit, exclude } = options;
  if (!Number.isInteger(limit) || limit < 0) throw new RangeError(`limit must be a non-negative integer, got ${limit}`);
  const norms = rowNorms(matrix);
  const centroid = new Float64Array(matrix.columns);
  const seeds = new Set<number>();
  let used = 0;
  for (const s of seedRows) {
    if (!Number.isInteger(s) || s < 0 || s >= matrix.rows) {
      throw new RangeError(`seed row ${s} is outside 0…${matrix.rows - 1}`);
    }
    if (seeds.has(s)) continue;
    seeds.add(s);
    if (norms[s] === 0) continue;
    used++;
    for (let k = matrix.rowStart[s]; k < matrix.rowStart[s + 1]; k++) {
      centroid[matrix.columnIndex[k]] += matrix.values[k] / norms[s];
    }
  }
  if (used === 0 || limit === 0) return [];
  const scored: SimilarRow[] = [];
  for (let r = 0; r < matrix.rows; r++) {
    if (norms[r] === 0 || seeds.has(r) || (exclude?.(r) ?? false)) continue;
    let dot = 0;
    for (let k = matrix.rowStart[r]; k < matrix.rowStart[r + 1]; k++) {
      dot += matrix.values[k] * centroid[matrix.columnIndex[k]];
    }
    if (dot !== 0) scored.push({ row: r, similarity: dot / (norms[r] * used) });
  }
  scored.sort((a, b) => b.similarity - a.similarity || a.row - b.row);
  return scored.slice(0, limit);
}

/** Euclidean norm of every row. */
export function rowNorms(matrix: SparseMatrix): Float64Array {
  const norms = new Float64Array(matrix.rows);
  for (let r = 0; r < matrix.rows; r++) {
    let s = 0;
    for (let k = matrix.rowStart[r]; k < matrix.rowStart[r + 1]; k++) s += matrix.values[k] * matrix.values[k];
    norms[r] = Math.sqrt(s);
  }
  return norms;
}
