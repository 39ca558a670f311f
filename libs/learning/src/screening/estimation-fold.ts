import { murmur3String } from '../hashing/murmur3.js';

/**
 * Share of random-draw items held out of the watched categories'
 * thresholds, to estimate what the cleared pile still holds: the thresholds
 * are read from the other items, so whether a held-out item is cleared does
 * not depend on its own label, and the held-out items in the cleared pile
 * are a fair sample of it. A quarter keeps three quarters for the thresholds
 * (the design's choice: the estimate needs fewer items than the promise).
 */
export const ESTIMATION_SHARE = 0.25;

/** Fixed, so an item stays in the same fold from one model version to the next. */
const FOLD_SEED = 0x5eed_f01d;

/**
 * Whether an item belongs to the estimation fold: a hash of its id, so the
 * split does not depend on the item's text or label and never changes.
 */
export function inEstimationFold(itemId: number): boolean {
  if (!Number.isInteger(itemId)) throw new RangeError(`itemId must be an integer, got ${itemId}`);
  return murmur3String(String(itemId), FOLD_SEED) / 4294967296 < ESTIMATION_SHARE;
}
