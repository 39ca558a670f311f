/**
 * Cribra's learning core: featurisation, classifier, uncertainty sampling,
 * split-conformal prediction sets, intervals and quality metrics. Pure
 * TypeScript: no framework, no database, no I/O.
 */
export { compileSeedTerms } from './text/seed-terms.js';
export type { SeedMatch, SeedTermMatcher } from './text/seed-terms.js';
