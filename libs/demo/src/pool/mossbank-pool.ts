import { createRng, normalizeForDuplicates, randomInt, shuffleInPlace, type Rng } from '#learning';
import {
  EMOJI,
  NEUTRAL_SENTENCES,
  PREFIXES,
  SLOTS,
  TEMPLATE_GROUPS,
  type HardCase,
  type MossbankCategory,
  type TemplateGroup,
} from './mossbank-vocabulary.js';

/** One generated post, with its hidden category (never imported: see {@link mossbankNdjson}). */
export interface MossbankPost {
  /** `mossbank-00001`, … in order of posting time. */
  externalId: string;
  text: string;
  /** `board/<board>`. */
  source: string;
  /** ISO 8601, UTC. */
  postedAt: string;
  meta: { thread: string; author: string };
  /** The hidden true category: what the simulated reviewer answers from. */
  category: MossbankCategory;
  hardCase: HardCase | null;
}

export interface MossbankPoolOptions {
  /** Seed of the generator; the same seed and count give the same posts. */
  seed?: number;
  /** Number of posts, 100 to 20 000. */
  count?: number;
  /** Target shares of `threat` and `harassment`; `ok` takes the rest. */
  shares?: { threat: number; harassment: number };
}

/** The seed and size of the pool `npm start` imports, and the simulated reviewer regenerates. */
export const DEMO_POOL_SEED = 20_260_302;
export const DEMO_POOL_SIZE = 3200;
/** A reported-posts queue: threats rare, some harassment, mostly harmless. */
export const DEMO_SHARES = { threat: 0.08, harassment: 0.2 } as const;

/** The invented weeks the posts are spread over: eight weeks from Monday 2 March 2026, UTC. */
const FIRST_DAY_MS = Date.UTC(2026, 2, 2);
const WEEKS = 8;
const MAX_ATTEMPTS = 200;

/**
 * Generates the Mossbank Commons pool: `count` posts whose categories follow
 * `shares` exactly (rounded), each written from a template of its category
 * with invented names, streets, shops, clubs, events and bands, varied in
 * length, casing, punctuation and emoji, a few in other languages. No two
 * posts have the same normalised text ({@link normalizeForDuplicates}, the
 * import's duplicate rule is no finer), so an import keeps every one.
 * Deterministic: the same options give the same posts.
 */
export function generateMossbankPool(options: MossbankPoolOptions = {}): MossbankPost[] {
  const seed = options.seed ?? DEMO_POOL_SEED;
  const count = options.count ?? DEMO_POOL_SIZE;
  const shares = options.shares ?? DEMO_SHARES;
  if (!Number.isInteger(count) || count < 100 || count > 20_000)
    throw new RangeError(`count must be an integer from 100 to 20000, got ${count}`);
  if (!(shares.threat >= 0 && shares.harassment >= 0 && shares.threat + shares.harassment <= 1)) {
    throw new RangeError(`shares must be non-negative and sum to at most 1, got ${JSON.stringify(shares)}`);
  }
  const rng = createRng(seed);
  const threats = Math.round(count * shares.threat);
  const harassment = Math.round(count * shares.harassment);
  const categories: MossbankCategory[] = [
    ...Array<MossbankCategory>(threats).fill('threat'),
    ...Array<MossbankCategory>(harassment).fill('harassment'),
    ...Array<MossbankCategory>(count - threats - harassment).fill('ok'),
  ];
  shuffleInPlace(categories, rng);

  const seen = new Set<string>();
  const drafts = categories.map((category) => {
    for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
      const group = pickGroup(category, rng);
      const template = group.templates[randomInt(rng, group.templates.length)];
      const text = decorate(fill(template.text, rng), category, rng);
      const key = normalizeForDuplicates(text);
      if (seen.has(key)) continue;
      seen.add(key);
      const board = template.board;
      return {
        text,
        category,
        hardCase: group.hardCase,
        source: `board/${board}`,
        postedAtMs: postingTime(rng),
        meta: { thread: `${board}-${1 + randomInt(rng, 60)}`, author: pick(SLOTS.user, rng) },
      };
    }
    throw new Error(
      `could not write a new ${category} post after ${MAX_ATTEMPTS} attempts: the templates are too few for ${count} posts`,
    );
  });
  drafts.sort((a, b) => a.postedAtMs - b.postedAtMs);
  return drafts.map((d, i) => ({
    externalId: mossbankId(i + 1),
    text: d.text,
    source: d.source,
    postedAt: new Date(d.postedAtMs).toISOString(),
    meta: d.meta,
    category: d.category,
    hardCase: d.hardCase,
  }));
}

/** `mossbank-00001` for 1. */
export function mossbankId(n: number): string {
  return `mossbank-${String(n).padStart(5, '0')}`;
}

/**
 * The pool as NDJSON rows for the import (`external_id`, `text`, `source`,
 * `created_at`; thread and author become metadata). The hidden category and
 * hard-case mark are left out: reviewers can read metadata.
 */
export function mossbankNdjson(posts: readonly MossbankPost[]): string {
  return (
    posts
      .map((p) =>
        JSON.stringify({
          external_id: p.externalId,
          text: p.text,
          source: p.source,
          created_at: p.postedAt,
          thread: p.meta.thread,
          author: p.meta.author,
        }),
      )
      .join('\n') + '\n'
  );
}

function pick<T>(xs: readonly T[], rng: Rng): T {
  return xs[randomInt(rng, xs.length)];
}

function pickGroup(category: MossbankCategory, rng: Rng): TemplateGroup {
  const groups = TEMPLATE_GROUPS.filter((g) => g.category === category);
  const total = groups.reduce((a, g) => a + g.weight, 0);
  let u = rng.next() * total;
  for (const g of groups) {
    u -= g.weight;
    if (u < 0) return g;
  }
  return groups[groups.length - 1];
}

/** Replaces each `{slot}` with a value of that slot. */
function fill(text: string, rng: Rng): string {
  return text.replace(/\{([a-z]+)\}/g, (_, slot: string) => {
    const values = SLOTS[slot] as readonly string[] | undefined;
    if (!values) throw new Error(`template slot {${slot}} has no values`);
    return pick(values, rng);
  });
}

/** Varies a post the way people write: a prefix, an extra sentence, casing, punctuation, emoji. */
function decorate(text: string, category: MossbankCategory, rng: Rng): string {
  let out = text;
  if (rng.next() < 0.12) out = pick(PREFIXES, rng) + out;
  const extra = rng.next();
  if (extra < 0.18) out = `${out} ${fill(pick(NEUTRAL_SENTENCES, rng), rng)}`;
  else if (extra < 0.26) out = `${fill(pick(NEUTRAL_SENTENCES, rng), rng)} ${out}`;
  const punctuation = rng.next();
  if (punctuation < 0.1) out = out.replace(/[.!?]$/, '!!!');
  else if (punctuation < 0.16) out = out.replace(/[.!?]$/, '...');
  else if (punctuation < 0.22) out = out.replace(/[.]$/, '');
  const casing = rng.next();
  if (casing < 0.06) out = out.toLowerCase();
  else if (casing < 0.09) out = out.toUpperCase();
  if (rng.next() < 0.22) out = `${out} ${pick(EMOJI[category], rng)}`;
  return out;
}

/** A time in the invented weeks, mostly between 07:00 and 23:00. */
function postingTime(rng: Rng): number {
  const day = randomInt(rng, WEEKS * 7);
  const hour = rng.next() < 0.9 ? 7 + randomInt(rng, 16) : randomInt(rng, 7);
  return FIRST_DAY_MS + day * 86_400_000 + hour * 3_600_000 + randomInt(rng, 3_600_000);
}
