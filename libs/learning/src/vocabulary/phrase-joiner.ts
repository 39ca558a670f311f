/** The mark of a seed term's last word that takes any ending (`hota*`). */
const ANY_ENDING = '*';

/** One token of a phrase: a word to equal, or (ending in `*`) a stem the token must begin with. */
function matches(token: string, pattern: string): boolean {
  return pattern.endsWith(ANY_ENDING) ? token.startsWith(pattern.slice(0, -1)) : token === pattern;
}

/**
 * Returns a function that rewrites a token list so that each occurrence of
 * one of `phrases` becomes a single token, the phrase's own tokens joined by
 * one space. A phrase's last token may end in `*`: it then stands for any
 * token that begins with the rest (the word with any ending, as a seed term
 * `hota*` does), and every form found is rewritten to the phrase itself, so
 * `["hota*"]` turns "hotar" and "hotade" both into the token `hota*`.
 * Scanning is leftmost first, the longest phrase at a position wins (as the
 * seed-term matcher does), and at equal length a phrase without `*` wins
 * (so a token that is itself a phrase of one word stays as it is).
 */
export function createPhraseJoiner(phrases: readonly (readonly string[])[]): (tokens: readonly string[]) => string[] {
  // Phrases whose first token is a whole word, by that word; phrases of one stem, by the stem.
  const byFirst = new Map<string, string[][]>();
  const stems = new Map<string, string>();
  const words = new Set<string>();
  for (const phrase of phrases) {
    // Phrases come from stored seed terms: checked as received.
    const given: unknown = phrase;
    if (
      !Array.isArray(given) ||
      given.some((t) => typeof t !== 'string' || t.length === 0 || t === ANY_ENDING) ||
      given.slice(0, -1).some((t: string) => t.endsWith(ANY_ENDING))
    ) {
      throw new TypeError('phrases must be arrays of non-empty strings; only the last may end in *');
    }
    const last = phrase[phrase.length - 1];
    if (phrase.length === 1) {
      if (last.endsWith(ANY_ENDING)) stems.set(last.slice(0, -1), last);
      else words.add(last);
      continue;
    }
    const list = byFirst.get(phrase[0]) ?? [];
    list.push([...phrase]);
    byFirst.set(phrase[0], list);
  }
  for (const list of byFirst.values())
    list.sort((a, b) => b.length - a.length || Number(a.at(-1)!.endsWith('*')) - Number(b.at(-1)!.endsWith('*')));
  const stemLengths = [...new Set([...stems.keys()].map((s) => s.length))].sort((a, b) => b - a);
  const stemOf = (token: string): string | undefined => {
    for (const length of stemLengths) {
      if (length > token.length) continue;
      const phrase = stems.get(token.slice(0, length));
      if (phrase !== undefined) return phrase;
    }
    return undefined;
  };
  return (tokens) => {
    if (byFirst.size === 0 && stems.size === 0) return [...tokens];
    const out: string[] = [];
    let i = 0;
    while (i < tokens.length) {
      const candidates = byFirst.get(tokens[i]);
      let taken = 0;
      if (candidates !== undefined) {
        for (const phrase of candidates) {
          if (i + phrase.length > tokens.length) continue;
          let same = true;
          for (let j = 1; j < phrase.length && same; j++) same = matches(tokens[i + j], phrase[j]);
          if (same) {
            taken = phrase.length;
            out.push(phrase.join(' '));
            break;
          }
        }
      }
      if (taken > 0) {
        i += taken;
      } else {
        out.push(words.has(tokens[i]) ? tokens[i] : (stemOf(tokens[i]) ?? tokens[i]));
        i++;
      }
    }
    return out;
  };
}
