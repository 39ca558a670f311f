import { createRng } from '#learning';
import { SYNTHETIC_CATEGORIES, SYNTHETIC_CUES, SYNTHETIC_FILLER } from '../../bench/synthetic-words.js';

/**
 * A labelled synthetic pool for end-to-end tests of the learning loop: three
 * categories, each with its own cue words mixed into shared filler, with
 * some overlap so that the model is not always sure. Test data only.
 */
export function syntheticPool(
  n: number,
  seed = 7,
): Array<{ externalId: string; text: string; label: 'threat' | 'harassment' | 'ok' }> {
  const g = createRng(seed);
  const rng = () => g.next();
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rng() * xs.length)];
  const cues = SYNTHETIC_CUES;
  const filler = SYNTHETIC_FILLER;
  const labels = SYNTHETIC_CATEGORIES;
  const out: Array<{ externalId: string; text: string; label: 'threat' | 'harassment' | 'ok' }> = [];
  for (let i = 0; i < n; i++) {
    // Shares like a reported-posts queue: mostly ok, some harassment, few threats.
    const u = rng();
    const label = u < 0.15 ? 'threat' : u < 0.4 ? 'harassment' : 'ok';
    const words: string[] = [];
    const len = 6 + Math.floor(rng() * 8);
    for (let w = 0; w < len; w++) {
      const r = rng();
      // Mostly own cues; sometimes another category's, so some items are genuinely ambiguous.
      words.push(r < 0.25 ? pick(cues[label]) : r < 0.32 ? pick(cues[pick(labels)]) : pick(filler));
    }
    out.push({ externalId: `s${i}`, text: `${words.join(' ')} #${i}`, label });
  }
  return out;
}
