import { describe, expect, it } from 'vitest';
import { IdfTable } from './idf-table.js';
import type { SparseVector } from './sparse-vector.js';
import { tfidf } from './tfidf.js';

const TOL = 5e-5;

function sparse(row: number[]): SparseVector {
  const indices: number[] = [];
  const values: number[] = [];
  row.forEach((v, i) => {
    if (v !== 0) {
      indices.push(i);
      values.push(v);
    }
  });
  return { indices: Int32Array.from(indices), values: Float64Array.from(values) };
}

function dense(v: SparseVector, width: number): number[] {
  const out = new Array<number>(width).fill(0);
  v.indices.forEach((index, i) => (out[index] = v.values[i]));
  return out;
}

function expectClose(actual: number[], expected: number[]): void {
  expect(actual.length).toBe(expected.length);
  actual.forEach((a, i) => expect(Math.abs(a - expected[i])).toBeLessThan(TOL));
}

// scikit-learn's TfidfTransformer documentation, worked example [reproduced]
// (the documentation of scikit-learn 1.2, sklearn.feature_extraction.text.TfidfTransformer).
const COUNTS = [
  [3, 0, 1],
  [2, 0, 0],
  [3, 0, 0],
  [4, 0, 0],
  [3, 2, 0],
  [3, 0, 2],
];

function table(): IdfTable {
  const idf = IdfTable.create(2);
  for (const row of COUNTS) idf.addDocument(sparse(row));
  return idf;
}

describe('tfidf', () => {
  it('learns the documented smoothed idf', () => {
    const idf = table();
    expectClose([idf.idf(0), idf.idf(1), idf.idf(2)], [1, 2.25276297, 1.84729786]);
  });

  it('reproduces the documented L2-normalised rows (raw tf)', () => {
    const idf = table();
    const rows = COUNTS.map((row) => dense(tfidf(sparse(row), idf, { sublinearTf: false }), 3));
    const expected = [
      [0.85151335, 0, 0.52433293],
      [1, 0, 0],
      [1, 0, 0],
      [1, 0, 0],
      [0.55422893, 0.83236428, 0],
      [0.63035731, 0, 0.77630514],
    ];
    rows.forEach((r, i) => expectClose(r, expected[i]));
  });

  it('reproduces the recomputed rows with sublinear tf', () => {
    // Same source, sublinear values recomputed only.
    const idf = table();
    const rows = COUNTS.map((row) => dense(tfidf(sparse(row), idf), 3));
    const expected = [
      [0.75062144, 0, 0.66073252],
      [1, 0, 0],
      [1, 0, 0],
      [1, 0, 0],
      [0.48205448, 0.87614124, 0],
      [0.55716945, 0, 0.83039882],
    ];
    rows.forEach((r, i) => expectClose(r, expected[i]));
  });

  it('serialises the table and updates it incrementally', () => {
    const idf = table();
    const json = idf.toJSON();
    expect(json).toMatchObject({
      type: 'cribra.idf-table',
      version: 1,
      documentCount: 6,
      indices: [0, 1, 2],
      df: [6, 1, 2],
    });
    const restored = IdfTable.fromJSON(JSON.parse(JSON.stringify(json)));
    restored.addDocument(sparse([0, 1, 0]));
    expect(restored.documentCount).toBe(7);
    expect(restored.documentFrequency(1)).toBe(2);
    // ln((1+7)/(1+2)) + 1, by hand.
    expect(Math.abs(restored.idf(1) - (Math.log(8 / 3) + 1))).toBeLessThan(1e-12);
    expect(() => IdfTable.fromJSON({ ...json, version: 2 })).toThrow(/version/);
    expect(() => IdfTable.fromJSON({ ...json, type: 'x' })).toThrow(TypeError);
  });

  it('takes back a document exactly as it was added, and refuses counts it never added', () => {
    const idf = table();
    const before = JSON.stringify(idf.toJSON());
    const extra = sparse([0, 4, 0, 1]);
    idf.addDocument(extra);
    expect(JSON.stringify(idf.toJSON())).not.toBe(before);
    idf.removeDocument(extra);
    expect(JSON.stringify(idf.toJSON())).toBe(before);
    // Counts never added: nothing to take back, and the table stays as it was.
    const empty = IdfTable.create(2);
    expect(() => empty.removeDocument(sparse([1, 0, 0, 0]))).toThrow(RangeError);
    empty.addDocument(sparse([1, 0, 0, 0]));
    expect(() => empty.removeDocument(sparse([1, 1, 0, 0]))).toThrow(/bucket 1/);
    expect(empty.documentCount).toBe(1);
    expect(empty.documentFrequency(0)).toBe(1);
  });

  it('rejects counts outside the table', () => {
    expect(() => tfidf(sparse([0, 0, 0, 0, 1]), table())).toThrow(RangeError);
  });
});
