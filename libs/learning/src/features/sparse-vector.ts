/**
 * Sparse vectors as parallel typed arrays: `indices` strictly ascending,
 * `values[i]` the coordinate at `indices[i]`.
 */
export interface SparseVector {
  readonly indices: Int32Array;
  readonly values: Float64Array;
}

/** Dot product of two sparse vectors by merging their sorted indices. */
export function sparseDot(a: SparseVector, b: SparseVector): number {
  let i = 0;
  let j = 0;
  let sum = 0;
  const ai = a.indices;
  const bi = b.indices;
  while (i < ai.length && j < bi.length) {
    const x = ai[i];
    const y = bi[j];
    if (x === y) {
      sum += a.values[i++] * b.values[j++];
    } else if (x < y) {
      i++;
    } else {
      j++;
    }
  }
  return sum;
}

/** Euclidean norm. */
export function sparseNorm(a: SparseVector): number {
  let s = 0;
  for (let i = 0; i < a.values.length; i++) s += a.values[i] * a.values[i];
  return Math.sqrt(s);
}

/** Cosine similarity; 0 when either vector is zero. */
export function cosineSimilarity(a: SparseVector, b: SparseVector): number {
  const na = sparseNorm(a);
  const nb = sparseNorm(b);
  return na === 0 || nb === 0 ? 0 : sparseDot(a, b) / (na * nb);
}

/**
 * Checks that `v` is a well-formed sparse vector (typed arrays of equal
 * length, indices strictly ascending in [0, dimension)).
 * @throws TypeError / RangeError naming `name`.
 */
export function assertSparseVector(v: SparseVector, name: string, dimension?: number): void {
  if (
    // JavaScript callers are not held to the type.
    (v as unknown) === null ||
    typeof v !== 'object' ||
    !(v.indices instanceof Int32Array) ||
    !(v.values instanceof Float64Array)
  ) {
    throw new TypeError(`${name} must be a sparse vector { indices: Int32Array, values: Float64Array }`);
  }
  if (v.indices.length !== v.values.length) {
    throw new RangeError(`${name}: indices (${v.indices.length}) and values (${v.values.length}) differ in length`);
  }
  for (let i = 0; i < v.indices.length; i++) {
    const x = v.indices[i];
    if (x < 0 || (dimension !== undefined && x >= dimension) || (i > 0 && x <= v.indices[i - 1])) {
      throw new RangeError(`${name}: index ${x} at position ${i} is out of range or not strictly ascending`);
    }
  }
}
