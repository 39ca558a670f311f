/**
 * Plain words beside the figures: every screen reads a statistic through these functions, so each figure has one
 * reading wherever it is shown, and the glossary page prints the same sentences.
 */

/** Where the agreement bands come from, named beside every reading that uses them. */
export const LANDIS_KOCH = 'Landis & Koch 1977';
export const LANDIS_KOCH_CITATION =
  'Landis, J. R. & Koch, G. G. (1977). The measurement of observer agreement for categorical data. Biometrics 33(1), 159–174.';
export const KRIPPENDORFF = 'Krippendorff 2004';
export const KRIPPENDORFF_CITATION =
  'Krippendorff, K. (2004). Content Analysis: An Introduction to Its Methodology, 2nd ed., Sage (chapter 11, on reliability).';

/**
 * Landis & Koch's (1977) bands for kappa: below 0 poor, 0–0.20 slight, 0.21–0.40 fair, 0.41–0.60 moderate,
 * 0.61–0.80 substantial, 0.81–1 almost perfect. A value below 0 is named "worse than chance": the raters agree less
 * often than they would by drawing categories at random with their own shares.
 */
export const KAPPA_BANDS: ReadonlyArray<{ upTo: number; words: string }> = [
  { upTo: 0.2, words: 'slight agreement' },
  { upTo: 0.4, words: 'fair agreement' },
  { upTo: 0.6, words: 'moderate agreement' },
  { upTo: 0.8, words: 'substantial agreement' },
  { upTo: 1, words: 'almost perfect agreement' },
];

/** The band of a kappa, without its source: "worse than chance" below 0. */
export function kappaBand(kappa: number): string {
  if (Number.isNaN(kappa)) return 'no reading';
  if (kappa < 0) return 'worse than chance';
  // Landis & Koch print bands on two decimals (0.21–0.40); a value is read at that precision.
  const v = Math.round(kappa * 100) / 100;
  return (KAPPA_BANDS.find((b) => v <= b.upTo) ?? KAPPA_BANDS[KAPPA_BANDS.length - 1]).words;
}

/** A kappa (Cohen's or Fleiss') in words, with the bands' source. */
export function kappaReading(kappa: number | null | undefined): string {
  if (kappa === null || kappa === undefined || Number.isNaN(kappa)) return 'not enough shared verdicts to read';
  if (kappa < 0) return `worse than chance: reviewers agree less often than random picks would (${LANDIS_KOCH})`;
  return `${kappaBand(kappa)} (${LANDIS_KOCH})`;
}

/**
 * Krippendorff's alpha in words: his own reliability thresholds (α ≥ 0.800 reliable; 0.667 ≤ α < 0.800 for tentative
 * conclusions only, Krippendorff 2004; recalled from the book, not re-checked against the page) and, because the
 * screens print kappa beside it, Landis & Koch's band too. Below 0: worse than chance.
 */
export function alphaReading(alpha: number | null | undefined): string {
  if (alpha === null || alpha === undefined || Number.isNaN(alpha)) return 'not enough shared verdicts to read';
  if (alpha < 0) return `worse than chance: reviewers agree less often than random picks would (${LANDIS_KOCH})`;
  const own =
    alpha >= 0.8
      ? 'reliable enough to rely on'
      : alpha >= 0.667
        ? 'good enough for tentative conclusions only'
        : 'too low to rely on';
  return `${own} (${KRIPPENDORFF}); ${kappaBand(alpha)} on the ${LANDIS_KOCH} bands`;
}

/** Macro-F1 in one sentence. */
export function macroF1Reading(f1: number | null | undefined): string {
  if (f1 === null || f1 === undefined || Number.isNaN(f1)) return 'not measured';
  return `the balance of precision and recall averaged over categories, rare ones weighing as much as common ones; 1 is every item right, ${f1 < 0.5 ? 'this is low' : f1 < 0.8 ? 'this is middling' : 'this is high'}`;
}

/** Accuracy in one sentence. */
export function accuracyReading(acc: number | null | undefined): string {
  if (acc === null || acc === undefined || Number.isNaN(acc)) return 'not measured';
  return `the most probable category was the reviewer's in ${Math.round(acc * 100)} of 100 items; a rare category can be missed every time while this stays high`;
}

/** Expected calibration error in one sentence. */
export function eceReading(ece: number | null | undefined): string {
  if (ece === null || ece === undefined || Number.isNaN(ece)) return 'not measured';
  return `how far the stated confidence is from the share actually right, on average: about ${Math.round(ece * 100)} percentage points here; 0 is perfectly calibrated`;
}

/** Multi-class Brier score in one sentence. */
export function brierReading(brier: number | null | undefined): string {
  if (brier === null || brier === undefined || Number.isNaN(brier)) return 'not measured';
  return 'the mean squared gap between the probabilities and what reviewers decided; 0 is perfect, 2 the worst possible, lower is better';
}

/** Log loss in one sentence. */
export function logLossReading(logLoss: number | null | undefined, categories?: number): string {
  if (logLoss === null || logLoss === undefined || Number.isNaN(logLoss)) return 'not measured';
  const chance =
    categories && categories > 1
      ? `; equal odds on ${categories} categories would score ${Math.log(categories).toFixed(2)}`
      : '';
  return `punishes confident mistakes hardest; 0 is perfect, lower is better${chance}`;
}

/** Coverage (promised or realized) in one sentence. */
export function coverageReading(coverage: number | null | undefined, target?: number): string {
  if (coverage === null || coverage === undefined || Number.isNaN(coverage)) return 'no random check decided yet';
  const per100 = Math.round(coverage * 100);
  const base = `the set held the reviewer's category for ${per100} of 100 items drawn at random`;
  if (target === undefined) return base;
  return coverage + 1e-9 >= target ? `${base}; at or above the promise` : `${base}; below the promise`;
}

/** The coverage target in one sentence. */
export function targetReading(target: number): string {
  return `the prediction set must hold the right category for at least ${Math.round(target * 100)} of 100 items drawn at random from the pool`;
}

/** The three triage calls in words. */
export const CALL_READINGS = {
  sure: 'sure: the prediction set holds one category',
  ambiguous: 'ambiguous: the set holds two or more categories, so a person must decide',
  unfamiliar: 'unfamiliar: the set is empty; the item is unlike anything calibrated',
} as const;

/** Mean set size in one sentence. */
export function meanSetSizeReading(size: number | null | undefined): string {
  if (size === null || size === undefined || Number.isNaN(size)) return 'no set yet';
  return `on average ${size.toFixed(2)} categories per set; 1 means every call sure, more means more for people to decide`;
}

/** The probability bars on the queue screen in one sentence. */
export const PROBABILITIES_READING =
  'the model’s leaning, learnt from this desk’s verdicts; it ranks the categories but is not how often the model is ' +
  'right; “in set”: kept by the prediction set at the coverage target';

/** “About n in 10”, for shares read aloud (0 and 10 said in words). */
function inTen(share: number): string {
  const n = Math.round(share * 10);
  return n === 0 ? 'almost none' : n === 10 ? 'almost all' : `about ${n} in 10`;
}

/** A keyword list's precision on the random draws in one sentence. */
export function keywordPrecisionReading(precision: number | null | undefined): string {
  if (precision === null || precision === undefined || Number.isNaN(precision)) return 'no random draw matches yet';
  return precision >= 0.95
    ? 'nearly every match is of the category'
    : `${inTen(1 - precision)} matches are something else: the count runs high`;
}

/** A keyword list's recall on the random draws in one sentence. */
export function keywordRecallReading(recall: number | null | undefined): string {
  if (recall === null || recall === undefined || Number.isNaN(recall)) return 'no random draw of the category yet';
  return recall >= 0.95
    ? 'the words catch nearly all of the category'
    : `the words miss ${inTen(1 - recall)} of the category’s items: the count runs low`;
}

/** One term of the glossary page. */
export interface GlossaryTerm {
  id: string;
  term: string;
  meaning: string;
}

/** The project's names and the standard figures, as the glossary page lists them (anchors are the ids). */
export const GLOSSARY: readonly GlossaryTerm[] = [
  {
    id: 'desk',
    term: 'desk',
    meaning: 'One triage workspace: its categories, its pool of items, its model versions, its settings.',
  },
  {
    id: 'item',
    term: 'item',
    meaning: 'One text to triage, with an optional external id, source, timestamp and metadata.',
  },
  { id: 'category', term: 'category', meaning: "One of a desk's labels (2 to 20 per desk)." },
  {
    id: 'seed-terms',
    term: 'seed terms',
    meaning:
      'Per-category keyword lists a supervisor provides to start before any model exists, and to highlight in the text.',
  },
  {
    id: 'verdict',
    term: 'verdict',
    meaning:
      "A reviewer's decision on an item: a category, or abstain; with the reviewer, the time taken and an optional note.",
  },
  {
    id: 'lease',
    term: 'lease',
    meaning: 'An item handed to one reviewer until the verdict arrives or the lease expires.',
  },
  {
    id: 'draw',
    term: 'draw',
    meaning:
      'Why an item was served: seed (cold start, a seed-term match), uncertainty (the model is least sure), random (a uniform draw from the pool, used for calibration and for the coverage check), second-opinion (a second reviewer, for agreement), screen (a flagged item). The reviewer is never shown the draw.',
  },
  {
    id: 'model-version',
    term: 'model version',
    meaning: 'One trained classifier with its calibration and figures; it never changes once published.',
  },
  {
    id: 'triage-call',
    term: 'triage call',
    meaning: `The model's call on an item under a version and a coverage target. ${CALL_READINGS.sure}; ${CALL_READINGS.ambiguous}; ${CALL_READINGS.unfamiliar}.`,
  },
  {
    id: 'watched-category',
    term: 'watched category',
    meaning: 'A category the team must not miss (for example threat); a desk may watch none, one or several.',
  },
  {
    id: 'flagged',
    term: 'flagged / cleared',
    meaning:
      'Under the current version, an open item is flagged when its prediction set holds a watched category, cleared when it holds none. Of all the items of a watched category the desk has held, at least 1 − α are decided by a reviewer or flagged, in expectation over the random draws; among the open items alone the share can be lower, because the review lane takes the likeliest ones first.',
  },
  { id: 'screen', term: 'screen (draw)', meaning: 'A flagged item served for review, highest probability first.' },
  { id: 'urgent', term: 'urgent', meaning: "A reviewer's escalation of one item, acknowledged by a supervisor." },
  { id: 'member', term: 'member', meaning: "A user's role on one desk; roles are per desk, admin is global." },
  {
    id: 'prediction-set',
    term: 'prediction set',
    meaning:
      'The categories the model cannot rule out for an item at the coverage target. It is a statement about the pool as a whole, not a judgement about a person.',
  },
  {
    id: 'coverage',
    term: 'coverage',
    meaning:
      'How often the prediction set holds the right category. The target is the promise; realized coverage is measured on verdicts of random draws, with a 95 % interval.',
  },
  {
    id: 'calibration-set',
    term: 'calibration set',
    meaning:
      'The verdicts on random draws. They set the thresholds of the prediction sets and never train the model; items picked for uncertainty never calibrate.',
  },
  {
    id: 'mean-set-size',
    term: 'mean set size',
    meaning: 'The average number of categories per prediction set; 1 means every call sure.',
  },
  {
    id: 'accuracy',
    term: 'accuracy',
    meaning: "The share of calibration items whose most probable category was the reviewer's.",
  },
  {
    id: 'macro-f1',
    term: 'macro-F1',
    meaning:
      'The F1 score (the harmonic mean of precision and recall) of each category, averaged with equal weight, so a rare category counts as much as a common one. From 0 to 1, higher is better.',
  },
  {
    id: 'log-loss',
    term: 'log loss',
    meaning:
      'The mean of −ln(probability given to the right category). Confident mistakes cost most; 0 is perfect, lower is better.',
  },
  {
    id: 'brier',
    term: 'Brier score',
    meaning:
      'The mean squared difference between the probabilities and the decided category (Brier 1950, multi-class form, from 0 to 2); lower is better.',
  },
  {
    id: 'ece',
    term: 'expected calibration error (ECE)',
    meaning:
      'The gap between stated confidence and the share actually right, averaged over confidence bins weighted by their items (Guo et al. 2017); 0 is perfectly calibrated.',
  },
  {
    id: 'kappa',
    term: "Cohen's kappa, Fleiss' kappa",
    meaning: `Agreement between reviewers beyond what chance would give: 1 is full agreement, 0 chance, below 0 worse than chance. Read with the bands of ${LANDIS_KOCH}: up to 0.20 slight, 0.21–0.40 fair, 0.41–0.60 moderate, 0.61–0.80 substantial, 0.81–1 almost perfect.`,
  },
  {
    id: 'alpha',
    term: "Krippendorff's alpha",
    meaning: `Agreement beyond chance that allows missing verdicts (abstentions). ${KRIPPENDORFF} advises relying on α ≥ 0.800 and drawing only tentative conclusions from 0.667 to 0.800; below 0 is worse than chance.`,
  },
  {
    id: 'nonconformity-score',
    term: 'nonconformity score',
    meaning:
      'How little an item looks like a category to the model (for example 1 minus its probability); the threshold is a quantile of these scores on the calibration set.',
  },
  {
    id: 'uncertainty-sampling',
    term: 'uncertainty sampling',
    meaning:
      'Serving the items the model is least sure of (least confidence, margin or entropy), because a verdict there teaches it most.',
  },
];

/** Each draw in words, for the trail and the item page (never shown to reviewers). */
export const DRAW_WORDS: Record<string, string> = {
  seed: 'served for a seed-term match, before or beside the model',
  uncertainty: 'served because the model was unsure of it',
  random: 'drawn at random from the pool: it calibrates and checks coverage',
  'second-opinion': 'served to a second reviewer, to measure agreement',
  screen: 'flagged for a watched category and served for review',
  archive: 'a label imported from an archive: it trains and never calibrates',
};
