import type { StoredJson } from '../stored-json.js';
import type { SparseVector } from './sparse-vector.js';

/** Serialised form of an {@link IdfTable}. */
export interface IdfTableJson {
  type: 'cribra.idf-table';
  version: 1;
  hashBits: number;
  documentCount: number;
  /** Buckets with a non-zero document frequency, ascending. */
  indices: number[];
  /** Document frequency of each bucket in `indices`. */
  df: number[];
}

/**
 * Document frequencies of hashed features over the pool, updatable as the
 * pool grows, giving the smoothed inverse document frequency
 * idf(t) = ln((1 + n) / (1 + df(t))) + 1 (scikit-learn's TfidfTransformer
 * with `smooth_idf=True`: as if one extra document held every term once).
 */
export class IdfTable {
  private readonly df: Uint32Array;
  private n = 0;

  private constructor(readonly hashBits: number) {
    this.df = new Uint32Array(1 << hashBits);
  }

  /** An empty table for 2^hashBits buckets. */
  static create(hashBits: number): IdfTable {
    if (!Number.isInteger(hashBits) || hashBits < 1 || hashBits > 26) {
      throw new RangeError(`hashBits must be an integer in 1…26, got ${hashBits}`);
    }
    return new IdfTable(hashBits);
  }

  /** Number of documents counted. */
  get documentCount(): number {
    return this.n;
  }

  /** Number of buckets, 2^hashBits. */
  get dimension(): number {
    return this.df.length;
  }

  /** Counts one document: every bucket with a non-zero count gains one. */
  addDocument(counts: SparseVector): void {
    const { indices, values } = counts;
    for (let i = 0; i < indices.length; i++) {
      const index = indices[i];
      if (index < 0 || index >= this.df.length) {
        throw new RangeError(`counts.indices[${i}] = ${index} is outside 0…${this.df.length - 1}`);
      }
      if (values[i] !== 0) this.df[index]++;
    }
    this.n++;
  }

  /**
   * Takes back one document counted by {@link addDocument} with the same counts (an erased item): every bucket with a
   * non-zero count loses one. Throws a RangeError, changing nothing, when a bucket or the document count would go below
   * zero, which means these counts were never added.
   */
  removeDocument(counts: SparseVector): void {
    const { indices, values } = counts;
    if (this.n === 0) throw new RangeError('removeDocument: the table counts no document');
    for (let i = 0; i < indices.length; i++) {
      const index = indices[i];
      if (index < 0 || index >= this.df.length) {
        throw new RangeError(`counts.indices[${i}] = ${index} is outside 0…${this.df.length - 1}`);
      }
      if (values[i] !== 0 && this.df[index] === 0) {
        throw new RangeError(`removeDocument: bucket ${index} has document frequency 0`);
      }
    }
    for (let i = 0; i < indices.length; i++) if (values[i] !== 0) this.df[indices[i]]--;
    this.n--;
  }

  /** Document frequency of bucket `index`. */
  documentFrequency(index: number): number {
    return this.df[index] ?? 0;
  }

  /** Smoothed idf of bucket `index`: ln((1 + n) / (1 + df)) + 1. */
  idf(index: number): number {
    return Math.log((1 + this.n) / (1 + this.df[index])) + 1;
  }

  toJSON(): IdfTableJson {
    const indices: number[] = [];
    const df: number[] = [];
    for (let i = 0; i < this.df.length; i++) {
      if (this.df[i] !== 0) {
        indices.push(i);
        df.push(this.df[i]);
      }
    }
    return { type: 'cribra.idf-table', version: 1, hashBits: this.hashBits, documentCount: this.n, indices, df };
  }

  /** Restores a table written by {@link IdfTable.toJSON}. */
  static fromJSON(json: StoredJson<IdfTableJson>): IdfTable {
    if (json?.type !== 'cribra.idf-table') throw new TypeError(`not an idf table: type ${String(json?.type)}`);
    if (json.version !== 1) throw new RangeError(`unsupported idf table version ${String(json.version)}`);
    const table = IdfTable.create(json.hashBits);
    if (!Number.isInteger(json.documentCount) || json.documentCount < 0) {
      throw new RangeError(`documentCount must be a non-negative integer, got ${json.documentCount}`);
    }
    if (json.indices.length !== json.df.length) throw new RangeError('indices and df differ in length');
    for (let i = 0; i < json.indices.length; i++) {
      const index = json.indices[i];
      const d = json.df[i];
      if (!Number.isInteger(index) || index < 0 || index >= table.df.length)
        throw new RangeError(`bad bucket index ${index}`);
      if (!Number.isInteger(d) || d < 0 || d > json.documentCount)
        throw new RangeError(`bad document frequency ${d} at bucket ${index}`);
      table.df[index] = d;
    }
    table.n = json.documentCount;
    return table;
  }
}
