/** Small helpers shared by the benchmark scripts. */
import {
  createFeaturizer,
  createRng,
  IdfTable,
  macroF1,
  shuffleInPlace,
  tfidf,
  trainLogisticModel,
  type Featurizer,
  type LogisticModel,
  type SparseVector,
} from '../libs/learning/src/index.js';
import type { LabelledText } from './spam-assassin.js';

/**
 * An integer setting read from the environment: `def` when unset or empty;
 * a RangeError naming the variable when it is not an integer from `min` to `max`.
 */
export function envInt(
  name: string,
  def: number,
  min: number,
  max: number,
  env: NodeJS.ProcessEnv = process.env,
): number {
  const raw = env[name];
  if (raw === undefined || raw === '') return def;
  const v = Number(raw);
  if (!Number.isInteger(v) || v < min || v > max)
    throw new RangeError(`${name}=${JSON.stringify(raw)}: expected an integer from ${min} to ${max}`);
  return v;
}

/** Median of a list of numbers. */
export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2;
}

/** Seeded 60/20/20 split: indices of train, calibration and test. */
export function split602020(n: number, seed: number): { train: number[]; calibration: number[]; test: number[] } {
  const order = shuffleInPlace(
    Array.from({ length: n }, (_, i) => i),
    createRng(seed),
  );
  const nTrain = Math.round(0.6 * n);
  const nCal = Math.round(0.2 * n);
  return {
    train: order.slice(0, nTrain),
    calibration: order.slice(nTrain, nTrain + nCal),
    test: order.slice(nTrain + nCal),
  };
}

/** Hashed counts of every text. */
export function countAll(featurizer: Featurizer, data: readonly LabelledText[]): SparseVector[] {
  return data.map((d) => featurizer.counts(d.text));
}

/** tf-idf of every item with idf learned from the rows `idfRows`. */
export function tfidfAll(
  counts: readonly SparseVector[],
  idfRows: readonly number[],
  hashBits: number,
): SparseVector[] {
  const idf = IdfTable.create(hashBits);
  for (const i of idfRows) idf.addDocument(counts[i]);
  return counts.map((c) => tfidf(c, idf));
}

/** Trains on `rows` and returns the model with its wall time. */
export function timedTrain(
  vectors: readonly SparseVector[],
  data: readonly LabelledText[],
  rows: readonly number[],
  categories: readonly string[],
  hashBits: number,
): { model: LogisticModel; ms: number } {
  const started = performance.now();
  const model = trainLogisticModel(
    rows.map((i) => vectors[i]),
    rows.map((i) => data[i].label),
    { categories, hashBits },
  );
  return { model, ms: performance.now() - started };
}

/** Macro-F1 of a model on `rows`. */
export function macroF1On(
  model: LogisticModel,
  vectors: readonly SparseVector[],
  data: readonly LabelledText[],
  rows: readonly number[],
  categories: readonly string[],
): number {
  const index = new Map(categories.map((c, i) => [c, i]));
  const truth = rows.map((i) => index.get(data[i].label)!);
  const predicted = rows.map((i) => index.get(model.predict(vectors[i]))!);
  return macroF1(truth, predicted, categories.length);
}

export { createFeaturizer };
