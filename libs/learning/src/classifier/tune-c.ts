import type { SparseVector } from '../features/sparse-vector.js';
import { macroF1 } from '../metrics/macro-f1.js';
import { createRng, shuffleInPlace } from '../random/rng.js';
import { trainLogisticModel, type TrainOptions } from './train-logistic.js';

/**
 * Candidate values of C tried by {@link tuneC}: a logarithmic grid around the
 * default 1 (common practice, no source: grids of powers of about 3 or 10).
 */
export const DEFAULT_C_GRID: readonly number[] = [0.1, 0.3, 1, 3, 10, 30];

export interface TuneCOptions extends Omit<TrainOptions, 'c' | 'warmStart'> {
  /** Candidate values of C (default {@link DEFAULT_C_GRID}). */
  grid?: readonly number[];
  /** Number of folds k, 2 or more (default 5). */
  folds?: number;
  /** Seed of the fold assignment. */
  seed: number;
}

export interface TuneCResult {
  /** The C with the highest mean macro-F1 over the folds (ties: the smaller C, the stronger regularisation). */
  c: number;
  folds: number;
  /** Mean out-of-fold macro-F1 of each candidate, in grid order. */
  scores: { c: number; macroF1: number }[];
}

/**
 * Picks the inverse regularisation strength C by k-fold cross-validation
 * (Stone 1974, "Cross-validatory choice and assessment of statistical
 * predictions", J. R. Stat. Soc. B 36(2):111–147): the rows are dealt into k
 * folds in a seeded random order, stratified by category (each category's
 * rows dealt round-robin, so every fold holds its share); each candidate is
 * trained k times on k − 1 folds and scored by macro-F1 on the fold left
 * out; the candidate with the best mean wins.
 *
 * @throws RangeError on bad options or fewer rows than folds.
 */
export function tuneC(vectors: readonly SparseVector[], labels: readonly string[], options: TuneCOptions): TuneCResult {
  const grid = options.grid ?? DEFAULT_C_GRID;
  const folds = options.folds ?? 5;
  if (!Number.isInteger(folds) || folds < 2) throw new RangeError(`folds must be an integer ≥ 2, got ${folds}`);
  if (grid.length === 0 || grid.some((c) => !(c > 0 && Number.isFinite(c))))
    throw new RangeError(`grid must hold numbers > 0, got ${JSON.stringify(grid)}`);
  if (vectors.length !== labels.length)
    throw new RangeError(`vectors (${vectors.length}) and labels (${labels.length}) differ in length`);
  if (vectors.length < folds) throw new RangeError(`${vectors.length} rows cannot be split into ${folds} folds`);
  const rng = createRng(options.seed);
  const fold = new Int32Array(vectors.length);
  const byCategory = new Map<string, number[]>();
  shuffleInPlace(
    labels.map((_, i) => i),
    rng,
  ).forEach((i) => {
    const rows = byCategory.get(labels[i]) ?? [];
    rows.push(i);
    byCategory.set(labels[i], rows);
  });
  let dealt = 0;
  for (const category of [...byCategory.keys()].sort())
    for (const i of byCategory.get(category)!) fold[i] = dealt++ % folds;
  const index = new Map(options.categories.map((c, i) => [c, i]));
  const { grid: _grid, folds: _folds, seed: _seed, ...training } = options;
  const scores = grid.map((c) => {
    let total = 0;
    for (let f = 0; f < folds; f++) {
      const trainRows: number[] = [];
      const testRows: number[] = [];
      for (let i = 0; i < vectors.length; i++) (fold[i] === f ? testRows : trainRows).push(i);
      const model = trainLogisticModel(
        trainRows.map((i) => vectors[i]),
        trainRows.map((i) => labels[i]),
        { ...training, c },
      );
      total += macroF1(
        testRows.map((i) => index.get(labels[i])!),
        testRows.map((i) => index.get(model.predict(vectors[i]))!),
        options.categories.length,
      );
    }
    return { c, macroF1: total / folds };
  });
  let best = scores[0];
  for (const s of scores) if (s.macroF1 > best.macroF1 || (s.macroF1 === best.macroF1 && s.c < best.c)) best = s;
  return { c: best.c, folds, scores };
}
