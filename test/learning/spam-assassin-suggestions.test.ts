/**
 * Seed-term suggestions on the SpamAssassin public corpus: for a seed list of
 * three spam words (chosen before any run: "free", "money", "offer"), the
 * words ranked by PPMI similarity to the seeds hold more spam-associated words
 * than rankings by frequency. A word is spam-associated when most of the
 * messages that hold it are spam. Two frequency baselines: the most frequent
 * words of the corpus, and the words seen most often within the window of a
 * seed term (what counting alone gives without PPMI's correction for words
 * that are frequent everywhere).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import {
  CooccurrenceCounter,
  createFeaturizer,
  ppmi,
  rankBySimilarity,
  VocabularyCounter,
  type CooccurrenceTable,
} from '#learning';
import { loadSpamAssassin } from '../../bench/spam-assassin.js';

const SEEDS = ['free', 'money', 'offer'];
const TOP = 30;
/** Candidates appear in at least this many messages (rarer words have unstable shares). */
const MIN_DOCUMENTS = 10;

describe('SpamAssassin: term suggestions', () => {
  let table: CooccurrenceTable;
  let spamShare: Float64Array;
  let ranked: { ppmi: number[]; frequency: number[]; seedNeighbours: number[] };

  beforeAll(() => {
    const data = loadSpamAssassin();
    const featurizer = createFeaturizer();
    const documents = data.map((d) => featurizer.tokens(d.text));
    const words = new VocabularyCounter();
    for (const d of documents) words.add(d);
    const vocabulary = words.vocabulary({ keep: SEEDS });
    const counter = new CooccurrenceCounter(vocabulary);
    const spamDocuments = new Float64Array(vocabulary.length);
    for (let i = 0; i < documents.length; i++) {
      counter.add(documents[i]);
      if (data[i].label !== 'spam') continue;
      for (const id of new Set(documents[i].map((t) => counter.indexOf(t)))) if (id >= 0) spamDocuments[id]++;
    }
    table = counter.table();
    spamShare = spamDocuments.map((s, i) => s / table.documents[i]);
    const seedRows = SEEDS.map((s) => vocabulary.indexOf(s));
    const candidate = (row: number) => !seedRows.includes(row) && table.documents[row] >= MIN_DOCUMENTS;
    const candidates = vocabulary.map((_, i) => i).filter(candidate);

    const byPpmi = rankBySimilarity(ppmi(table.counts), seedRows, { limit: TOP, exclude: (r) => !candidate(r) });
    const byFrequency = [...candidates].sort((a, b) => table.occurrences[b] - table.occurrences[a]);
    const withSeeds = new Float64Array(vocabulary.length);
    for (const s of seedRows) {
      for (let k = table.counts.rowStart[s]; k < table.counts.rowStart[s + 1]; k++) {
        withSeeds[table.counts.columnIndex[k]] += table.counts.values[k];
      }
    }
    const bySeedNeighbours = candidates.filter((r) => withSeeds[r] > 0).sort((a, b) => withSeeds[b] - withSeeds[a]);
    ranked = {
      ppmi: byPpmi.map((r) => r.row),
      frequency: byFrequency.slice(0, TOP),
      seedNeighbours: bySeedNeighbours.slice(0, TOP),
    };
  }, 120_000);

  function mostlySpam(rows: number[]): number {
    return rows.filter((r) => spamShare[r] > 0.5).length / rows.length;
  }

  it('suggests more spam-associated words than frequency rankings', () => {
    const words = (rows: number[]) => rows.map((r) => table.words[r]).join(' ');
    const shares = {
      ppmi: mostlySpam(ranked.ppmi),
      frequency: mostlySpam(ranked.frequency),
      seedNeighbours: mostlySpam(ranked.seedNeighbours),
    };
    console.info(
      `SpamAssassin, seeds ${SEEDS.join(', ')}, top ${TOP}: share of words mostly in spam: ` +
        `PPMI ${shares.ppmi.toFixed(3)}, corpus frequency ${shares.frequency.toFixed(3)}, ` +
        `frequency near seeds ${shares.seedNeighbours.toFixed(3)}\n` +
        `  PPMI: ${words(ranked.ppmi)}\n  frequency: ${words(ranked.frequency)}\n` +
        `  near seeds: ${words(ranked.seedNeighbours)}`,
    );
    expect(ranked.ppmi).toHaveLength(TOP);
    expect(shares.ppmi).toBeGreaterThan(shares.frequency);
    expect(shares.ppmi).toBeGreaterThan(shares.seedNeighbours);
  });
});
