/**
 * The common-password list as the service ships it, made from a ranked list of passwords (most used first): every
 * entry of 8 characters or more (shorter ones fail the length rule anyway), NFKC-normalised and lower-cased, in rank
 * order, without duplicates.
 */
export function selectCommonPasswords(ranked: readonly string[]): string[] {
  const kept = new Set<string>();
  for (const p of ranked) {
    const folded = foldPassword(p);
    if (Array.from(folded).length >= 8) kept.add(folded);
  }
  return [...kept];
}

/** How a password is compared with the list: NFKC, lower case. */
export function foldPassword(p: string): string {
  return p.normalize('NFKC').toLowerCase();
}
