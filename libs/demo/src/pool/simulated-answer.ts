import { randomInt, type Rng } from '#learning';

/** What the simulated reviewer answers: a category, or abstain. */
export type SimulatedAnswer = { category: string } | { abstain: true };

export interface SimulatedAnswerOptions {
  /** Probability of answering a wrong category (uniform over the others). */
  errorRate: number;
  /** Probability of abstaining. */
  abstainRate: number;
}

/** A careful but human reviewer: about 1 in 20 answers wrong, about 1 in 100 abstains. */
export const DEFAULT_SIMULATED_ANSWER: SimulatedAnswerOptions = { errorRate: 0.05, abstainRate: 0.01 };

/**
 * The simulated reviewer's answer on an item whose true category is `truth`:
 * with probability `abstainRate` it abstains, with probability `errorRate`
 * it picks one of the other categories uniformly, otherwise it answers the truth.
 */
export function simulatedAnswer(
  truth: string,
  categories: readonly string[],
  rng: Rng,
  options: SimulatedAnswerOptions = DEFAULT_SIMULATED_ANSWER,
): SimulatedAnswer {
  if (!categories.includes(truth))
    throw new RangeError(`truth ${JSON.stringify(truth)} is not one of the categories ${JSON.stringify(categories)}`);
  const { errorRate, abstainRate } = options;
  if (!(errorRate >= 0 && abstainRate >= 0 && errorRate + abstainRate <= 1))
    throw new RangeError(
      `errorRate and abstainRate must be non-negative and sum to at most 1, got ${errorRate} and ${abstainRate}`,
    );
  const u = rng.next();
  if (u < abstainRate) return { abstain: true };
  if (u < abstainRate + errorRate && categories.length > 1) {
    const others = categories.filter((c) => c !== truth);
    return { category: others[randomInt(rng, others.length)] };
  }
  return { category: truth };
}

/** A human-ish pause before answering, uniform in [minMs, maxMs). */
export function readingPauseMs(rng: Rng, minMs = 200, maxMs = 600): number {
  if (!(minMs >= 0 && maxMs > minMs)) throw new RangeError(`need 0 <= minMs < maxMs, got ${minMs} and ${maxMs}`);
  return minMs + Math.floor(rng.next() * (maxMs - minMs));
}
