/**
 * Seed-term suggestions at scale: the count job's computation (both streaming
 * passes, PPMI, the row cut, the stored encoding) and the query's (decode,
 * rank against a category's seed terms), on generated Mossbank Commons posts,
 * with the settings the job uses. Items are handed over in pages of 1 000 as
 * the job reads them; the database reads themselves are not included (the
 * integration test runs the job through both databases). Peak resident memory
 * is sampled every 20 ms.
 *
 * Prints one JSON document on stdout.
 *
 * Environment: BENCH_TERMS_ITEMS (default 100000), BENCH_TERMS_QUERIES (default 50).
 */
import {
  CooccurrenceCounter,
  createFeaturizer,
  createPhraseJoiner,
  keepLargestPerRow,
  ppmi,
  rankBySimilarity,
  VocabularyCounter,
} from '#learning';
import { generateMossbankPool, MOSSBANK_SEED_TERMS } from '../libs/demo/src/pool/index.js';
import {
  TERM_MIN_COUNT,
  TERM_ROW_ENTRIES,
  TERM_TRACKED_WORDS,
  TERM_VOCABULARY_SIZE,
  TERM_WINDOW,
} from '../libs/vocabulary/src/term-settings.js';
import {
  decodeTermStatistics,
  encodeTermStatistics,
  EXAMPLES_PER_WORD,
} from '../libs/vocabulary/src/term-statistics.codec.js';

const items = Number(process.env.BENCH_TERMS_ITEMS ?? 100_000);
const queries = Number(process.env.BENCH_TERMS_QUERIES ?? 50);
const PAGE = 1000;

// The generator writes at most 20 000 distinct posts per seed: larger pools join several seeds (a post may then
// repeat, as reposts do; the counts take it as it comes).
const POOL_MAX = 20_000;
const posts: Array<{ id: number; text: string }> = [];
for (let seed = 1; posts.length < items; seed++)
  for (const p of generateMossbankPool({ seed, count: Math.min(POOL_MAX, items - posts.length) }))
    posts.push({ id: posts.length + 1, text: p.text });
global.gc?.();
const rssBefore = process.memoryUsage().rss;
let peak = rssBefore;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 20);

async function* pages() {
  for (let at = 0; at < posts.length; at += PAGE) {
    yield posts.slice(at, at + PAGE);
    // Let the sampler run, as the job's awaits on the database would.
    await new Promise((r) => setImmediate(r));
  }
}

const featurizer = createFeaturizer();
const seedKeys = [
  ...new Set(
    Object.values(MOSSBANK_SEED_TERMS)
      .flat()
      .map((t) => featurizer.tokens(t).join(' ')),
  ),
];
const join = createPhraseJoiner(seedKeys.map((k) => k.split(' ')));
const tokensOf = (text: string) => join(featurizer.tokens(text));

const t0 = performance.now();
const words = new VocabularyCounter({ maxTracked: TERM_TRACKED_WORDS });
for await (const page of pages()) for (const p of page) words.add(tokensOf(p.text));
const vocabulary = words.vocabulary({ size: TERM_VOCABULARY_SIZE, minCount: TERM_MIN_COUNT, keep: seedKeys });
const t1 = performance.now();
const counter = new CooccurrenceCounter(vocabulary, { window: TERM_WINDOW });
const examples = new Int32Array(vocabulary.length * EXAMPLES_PER_WORD);
const filled = new Uint8Array(vocabulary.length);
for await (const page of pages())
  for (const p of page) {
    const tokens = tokensOf(p.text);
    counter.add(tokens);
    for (const token of new Set(tokens)) {
      const w = counter.indexOf(token);
      if (w >= 0 && filled[w] < EXAMPLES_PER_WORD) examples[w * EXAMPLES_PER_WORD + filled[w]++] = p.id;
    }
  }
const pairs = counter.pairCount;
const table = counter.table();
const rows = keepLargestPerRow(ppmi(table.counts), TERM_ROW_ENTRIES);
const data = encodeTermStatistics({
  words: vocabulary,
  documents: Uint32Array.from(table.documents),
  ppmi: rows,
  examples,
  leaningCategories: [],
  leanings: new Float32Array(0),
});
const t2 = performance.now();
clearInterval(sampler);
peak = Math.max(peak, process.memoryUsage().rss);

const q0 = performance.now();
const decoded = decodeTermStatistics(data);
const decodeMs = performance.now() - q0;
const index = new Map(decoded.words.map((w, i) => [w, i]));
const times: number[] = [];
const categories = Object.keys(MOSSBANK_SEED_TERMS) as Array<keyof typeof MOSSBANK_SEED_TERMS>;
for (let q = 0; q < queries; q++) {
  const category = categories[q % categories.length];
  const seeds = MOSSBANK_SEED_TERMS[category].map((t) => index.get(featurizer.tokens(t).join(' ')) ?? -1);
  const s = performance.now();
  rankBySimilarity(
    decoded.ppmi,
    seeds.filter((r) => r >= 0),
    { limit: 30, exclude: (w) => decoded.documents[w] < 3 },
  );
  times.push(performance.now() - s);
}
times.sort((a, b) => a - b);
const round = (x: number) => Math.round(x * 10) / 10;
console.log(
  JSON.stringify(
    {
      items,
      vocabulary: vocabulary.length,
      pairs,
      storedEntries: rows.values.length,
      storedMB: round(data.length / 1e6),
      job: {
        firstPassMs: Math.round(t1 - t0),
        countAndPpmiMs: Math.round(t2 - t1),
        totalMs: Math.round(t2 - t0),
        peakRssMB: Math.round(peak / 1e6),
        rssAtStartMB: Math.round(rssBefore / 1e6),
      },
      query: {
        decodeOnceMs: round(decodeMs),
        rankMedianMs: round(times[times.length >> 1]),
        rankMaxMs: round(times[times.length - 1]),
      },
    },
    null,
    2,
  ),
);
