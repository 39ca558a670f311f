/**
 * Measurement behind DEFAULT_HASH_BITS: macro-F1 on SpamAssassin for several
 * hash sizes (seeded 60/20/20 splits, full training split, default training
 * options). Run with `npm run build:bench && node dist/bench/hash-bits.bench.js`.
 * Prints one JSON object.
 */
import { countAll, createFeaturizer, macroF1On, split602020, tfidfAll, timedTrain } from './bench-helpers.js';
import { loadSpamAssassin, SPAM_ASSASSIN_CATEGORIES } from './spam-assassin.js';

const BITS = (process.env.HASH_BITS ?? '14,16,18,20').split(',').map(Number);
const SEEDS = [1, 2, 3];
const data = loadSpamAssassin();
const categories: string[] = [...SPAM_ASSASSIN_CATEGORIES];
const out: Record<string, { macroF1: number[]; mean: number; distinctBucketsUsed: number }> = {};
for (const bits of BITS) {
  const featurizer = createFeaturizer({ hashBits: bits });
  const counts = countAll(featurizer, data);
  const used = new Set<number>();
  for (const c of counts) for (const i of c.indices) used.add(i);
  const f1s: number[] = [];
  for (const seed of SEEDS) {
    const { train, calibration, test } = split602020(data.length, seed);
    const vectors = tfidfAll(counts, [...train, ...calibration], bits);
    const { model } = timedTrain(vectors, data, train, categories, bits);
    f1s.push(Number(macroF1On(model, vectors, data, test, categories).toFixed(4)));
  }
  out[String(bits)] = {
    macroF1: f1s,
    mean: Number((f1s.reduce((s, x) => s + x, 0) / f1s.length).toFixed(4)),
    distinctBucketsUsed: used.size,
  };
}
process.stdout.write(JSON.stringify(out, null, 2) + '\n');
