/**
 * Returns a function that rewrites a token list so that each occurrence of
 * one of `phrases` (token sequences of two or more tokens) becomes a single
 * token, its tokens joined by one space. Scanning is leftmost first, the
 * longest phrase at a position wins (as the seed-term matcher does). Single
 * tokens in `phrases` are left as they are.
 */
export function createPhraseJoiner(phrases: readonly (readonly string[])[]): (tokens: readonly string[]) => string[] {
  const byFirst = new Map<string, string[][]>();
  for (const phrase of phrases) {
    // Phrases come from stored seed terms: checked as received.
    const given: unknown = phrase;
    if (!Array.isArray(given) || given.some((t) => typeof t !== 'string' || t.length === 0)) {
      throw new TypeError('phrases must be arrays of non-empty strings');
    }
    if (phrase.length < 2) continue;
    const list = byFirst.get(phrase[0]) ?? [];
    list.push([...phrase]);
    byFirst.set(phrase[0], list);
  }
  for (const list of byFirst.values()) list.sort((a, b) => b.length - a.length);
  return (tokens) => {
    if (byFirst.size === 0) return [...tokens];
    const out: string[] = [];
    let i = 0;
    while (i < tokens.length) {
      const candidates = byFirst.get(tokens[i]);
      let taken = 0;
      if (candidates !== undefined) {
        for (const phrase of candidates) {
          if (i + phrase.length > tokens.length) continue;
          let same = true;
          for (let j = 1; j < phrase.length && same; j++) same = tokens[i + j] === phrase[j];
          if (same) {
            taken = phrase.length;
            break;
          }
        }
      }
      if (taken > 0) {
        out.push(tokens.slice(i, i + taken).join(' '));
        i += taken;
      } else {
        out.push(tokens[i++]);
      }
    }
    return out;
  };
}
