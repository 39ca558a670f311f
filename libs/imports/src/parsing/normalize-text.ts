import { createHash } from 'node:crypto';

// Characters whose full case folding (Unicode CaseFolding.txt, status F)
// differs from their lower-case mapping and that NFKC does not already
// decompose: sharp s and the Greek letters with iota subscript (and the
// combining iota subscript itself). For these, upper-casing and then
// lower-casing yields exactly the full folding ("ß" → "SS" → "ss",
// "ᾳ" → "ΑΙ" → "αι"). Applying that round trip to every character would be
// wrong for a few letters, notably Turkish dotless "ı", which does not fold
// to "i"; hence the explicit list. The combining iota comes first, where it
// cannot read as combined with the character before it.
const FULL_FOLD_BY_ROUND_TRIP =
  /[\u0345\u00DF\u1E9E\u1F80-\u1FAF\u1FB2-\u1FB4\u1FB7\u1FBC\u1FC2-\u1FC4\u1FC7\u1FCC\u1FF2-\u1FF4\u1FF7\u1FFC]/gu;

// Final sigma lower-cases to "ς" by context but folds to "σ".
const FINAL_SIGMA = /\u03C2/gu;

// Zero-width spaces, joiners, soft hyphens, variation selectors and the like:
// invisible, so two texts differing only in them look identical to a reader.
const DEFAULT_IGNORABLE = /\p{Default_Ignorable_Code_Point}/gu;

// Runs of ECMAScript `\s` (Unicode White_Space, the line terminators and
// U+FEFF) other than a lone U+0020: replacing every single space with itself
// cost most of the normalisation time on ordinary prose.
const WHITESPACE_RUN = / \s+|[^\S ]\s*/gu;

/**
 * The normalised form of a text, used only to find duplicates: two texts are
 * duplicates when their normalised forms are equal.
 *
 * An approximation of Unicode's `toNFKC_Casefold`:
 * 1. NFKC (Unicode Standard Annex #15): full-width letters, ligatures such as
 *    "ﬁ", superscripts and other compatibility variants become their plain
 *    forms;
 * 2. full case folding: `toLowerCase`, then the full folding of "ß"/"ẞ"
 *    ("ss"), of the Greek letters with iota subscript ("ᾳ" → "αι") and of
 *    final sigma ("ς" → "σ"). It differs from CaseFolding.txt only for
 *    Cherokee, which folds here to lower case instead of upper case; the
 *    resulting equivalence classes are the same. Dotless "ı" stays distinct
 *    from "i", as in the Unicode default folding;
 * 3. removal of default-ignorable code points (zero-width space and joiners,
 *    soft hyphen, variation selectors), as `toNFKC_Casefold` does;
 * 4. NFKC again, since folding can leave sequences that are not normalised;
 * 5. every run of whitespace collapsed to one U+0020 and the ends trimmed.
 *
 * The empty string means the text has no visible content.
 */
export function normalizeText(text: string): string {
  const folded = text
    .normalize('NFKC')
    .toLowerCase()
    .replace(FULL_FOLD_BY_ROUND_TRIP, (c) => c.toUpperCase().toLowerCase())
    .replace(FINAL_SIGMA, '\u03C3')
    .replace(DEFAULT_IGNORABLE, '');
  return folded.normalize('NFKC').replace(WHITESPACE_RUN, ' ').trim();
}

/** SHA-256 (FIPS 180-4) of the UTF-8 bytes of a normalised text, as 64 lower-case hex digits. */
export function hashNormalizedText(normalized: string): string {
  return createHash('sha256').update(normalized, 'utf8').digest('hex');
}
