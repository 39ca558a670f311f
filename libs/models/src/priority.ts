import { entropy, leastConfidence, margin } from '#learning';
import type { Strategy } from '#database';

/**
 * Queue priority of an item (higher is served first) under a desk's
 * strategy (Settles 2009, §3.1): entropy; 1 − margin (a small margin is
 * uncertain); least confidence; or the prediction-set size first, entropy
 * (scaled below 1) breaking ties.
 */
export function priorityOf(p: ArrayLike<number>, strategy: Strategy, setSize: number): number {
  switch (strategy) {
    case 'entropy':
      return entropy(p);
    case 'margin':
      return 1 - margin(p);
    case 'least-confidence':
      return leastConfidence(p);
    case 'set-size':
      return setSize + entropy(p) / Math.log(Math.max(2, p.length)) / 1.0001;
  }
}
