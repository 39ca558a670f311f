import type { LoadedModel } from '#models';

/**
 * How a model version leans each word: for a text made of the word alone, the
 * change in the log-odds of each category from an empty text,
 *
 *   leaning(w, c) = logit P(c | w) − logit P(c | ∅),
 *
 * positive when the word pushes the model towards c. Read through the model's
 * own featurisation and probabilities only (`vectorize`, `predictProba`), not
 * its weights, so it holds for any classifier the desk trains: hashed features
 * (word and character n-grams) cannot be read back as words anyway.
 *
 * @returns leanings[w · k + c] for the model's k categories, in its order.
 */
export function termLeanings(model: LoadedModel, words: readonly string[]): Float32Array {
  const k = model.categories.length;
  const out = new Float32Array(words.length * k);
  const base = model.classifier.predictProba(model.vectorize(''));
  const logit = (p: number) => {
    const q = Math.min(1 - 1e-12, Math.max(1e-12, p));
    return Math.log(q / (1 - q));
  };
  for (let w = 0; w < words.length; w++) {
    const p = model.classifier.predictProba(model.vectorize(words[w]));
    for (let c = 0; c < k; c++) out[w * k + c] = logit(p[c]) - logit(base[c]);
  }
  return out;
}
