import { Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { DenseColumn, SparseDesignMatrix } from './sparse-design-matrix.js';

// [[1, 0, 2], [0, 3, 0], [4, 0, 5]] in CSR.
function example(): SparseDesignMatrix {
  return new SparseDesignMatrix(
    Int32Array.of(0, 2, 3, 5),
    Int32Array.of(0, 2, 1, 0, 2),
    Float64Array.of(1, 2, 3, 4, 5),
    3,
  );
}
const DENSE = new Matrix([
  [1, 0, 2],
  [0, 3, 0],
  [4, 0, 5],
]);

describe('SparseDesignMatrix', () => {
  it('multiplies like the dense matrix, as ml-matrix calls it', () => {
    const x = example();
    const w = new Matrix([[0.5, -1, 2]]);
    expect(x.mmul(w.transpose()).to1DArray()).toEqual(DENSE.mmul(w.transpose()).to1DArray());
    const r = Matrix.columnVector([1, 2, 3]);
    expect(x.transpose().mmul(r).to1DArray()).toEqual(DENSE.transpose().mmul(r).to1DArray());
    expect(x.get(2, 2)).toBe(5);
    expect(x.get(1, 0)).toBe(0);
    expect(x.nonZeros).toBe(5);
  });

  it('centres columns implicitly', () => {
    const x = example();
    const means = x.columnMeans();
    expect(Array.from(means)).toEqual([5 / 3, 1, 7 / 3]);
    x.centreColumns(means);
    const centred = DENSE.clone().subRowVector(Array.from(means));
    const w = Float64Array.of(0.5, -1, 2);
    const got = Array.from(x.times(w));
    const want = centred.mmul(Matrix.columnVector(Array.from(w))).to1DArray();
    got.forEach((g, i) => expect(Math.abs(g - want[i])).toBeLessThan(1e-12));
    const r = Float64Array.of(1, -2, 0.5);
    const gotT = Array.from(x.transposeTimes(r));
    const wantT = centred
      .transpose()
      .mmul(Matrix.columnVector(Array.from(r)))
      .to1DArray();
    gotT.forEach((g, i) => expect(Math.abs(g - wantT[i])).toBeLessThan(1e-12));
  });

  it('adds the base scores of the class whose turn it is', () => {
    const x = example();
    x.beginRound([Float64Array.of(10, 10, 10), Float64Array.of(100, 100, 100)], 2);
    const w = new DenseColumn(Float64Array.of(0, 0, 0));
    const seen = [0, 1, 2, 3].map(() => x.mmul(w).get(0, 0));
    expect(seen).toEqual([10, 10, 100, 100]);
    expect(x.productCount).toBe(4);
  });

  it('weighs rows in the transposed product of the class whose turn it is', () => {
    const x = example();
    const weights = [Float64Array.of(1, 1, 1), Float64Array.of(2, 0, 1)];
    x.beginRound(null, 1, weights);
    const w = new DenseColumn(Float64Array.of(0, 0, 0));
    const r = new DenseColumn(Float64Array.of(1, 1, 1));
    x.mmul(w); // class 0's step
    expect(x.transpose().mmul(r).to1DArray()).toEqual([5, 3, 7]);
    x.mmul(w); // class 1's step: Xᵀ(weights ⊙ r) = Xᵀ[2, 0, 1]
    expect(x.transpose().mmul(r).to1DArray()).toEqual([6, 0, 9]);
  });

  it('is read-only and checks shapes', () => {
    expect(() => example().set(0, 0, 1)).toThrow(TypeError);
    expect(() => example().mmul(Matrix.columnVector([1, 2]))).toThrow(/3 × 1/);
    expect(() => new SparseDesignMatrix(Int32Array.of(0, 1), Int32Array.of(5), Float64Array.of(1), 3)).toThrow(
      RangeError,
    );
  });
});
