import { compileSeedTerms, wilsonInterval, type SeedTermMatcher } from '#learning';
import { periodStart } from '#models';

/** The periods keyword counts are summed over. */
export const KEYWORD_PERIODS = ['day', 'week', 'month'] as const;
export type KeywordPeriod = (typeof KEYWORD_PERIODS)[number];
/** Which date of an item places it in a period. */
export const KEYWORD_DATES = ['posted', 'imported'] as const;
export type KeywordDate = (typeof KEYWORD_DATES)[number];

/**
 * What the count job keeps: per day (UTC, `YYYY-MM-DD`) the number of items
 * and, per category with seed terms, how many of them match its terms; once
 * by posting day (items without one are counted in `undated`) and once by
 * import day.
 */
export interface KeywordDays {
  categories: string[];
  posted: Record<string, number[]>;
  imported: Record<string, number[]>;
  undated: number;
}

/** One matcher per category with seed terms, in the desk's category order. */
export function categoryMatchers(
  seedTerms: Record<string, string[]>,
  categories: readonly string[],
): Array<{ category: string; matcher: SeedTermMatcher }> {
  return categories
    .map((category) => ({ category, matcher: compileSeedTerms({ [category]: seedTerms[category] ?? [] }) }))
    .filter((m) => m.matcher.size > 0);
}

const day = (d: Date): string => d.toISOString().slice(0, 10);

/** Counts items by day as the count job streams over the pool. */
export class KeywordDayCounter {
  private readonly matchers: Array<{ category: string; matcher: SeedTermMatcher }>;
  private readonly posted = new Map<string, number[]>();
  private readonly imported = new Map<string, number[]>();
  private undated = 0;

  constructor(seedTerms: Record<string, string[]>, categories: readonly string[]) {
    this.matchers = categoryMatchers(seedTerms, categories);
  }

  add(item: { text: string; postedAt: Date | null; importedAt: Date }): void {
    const row = [1, ...this.matchers.map((m) => (m.matcher.count(item.text) > 0 ? 1 : 0))];
    const bump = (into: Map<string, number[]>, key: string) => {
      const counts = into.get(key);
      if (counts === undefined) into.set(key, row.slice());
      else for (let i = 0; i < row.length; i++) counts[i] += row[i];
    };
    bump(this.imported, day(item.importedAt));
    if (item.postedAt === null) this.undated++;
    else bump(this.posted, day(item.postedAt));
  }

  result(): KeywordDays {
    const sorted = (m: Map<string, number[]>) =>
      Object.fromEntries([...m.entries()].sort(([a], [b]) => (a < b ? -1 : 1)));
    return {
      categories: this.matchers.map((m) => m.category),
      posted: sorted(this.posted),
      imported: sorted(this.imported),
      undated: this.undated,
    };
  }
}

/** A share with its Wilson 95 % interval; `estimate` null (and the interval 0–1) when nothing was counted. */
export interface Share {
  estimate: number | null;
  lower: number;
  upper: number;
  /** How many random verdicts the share is taken over. */
  n: number;
}

function share(hits: number, n: number): Share {
  if (n === 0) return { estimate: null, lower: 0, upper: 1, n: 0 };
  const ci = wilsonInterval(hits, n);
  return { estimate: hits / n, lower: ci.lower, upper: ci.upper, n };
}

/** How the keywords of one category fared in one period. */
export interface KeywordCategoryFigures {
  /** Items of the period that match the category's seed terms. */
  matches: number;
  /** Of the random-draw items that match, the share reviewers put in the category. */
  precision: Share;
  /** Of the random-draw items reviewers put in the category, the share that match. */
  recall: Share;
}

export interface KeywordPeriodFigures {
  start: string;
  items: number;
  randomVerdicts: number;
  perCategory: Record<string, KeywordCategoryFigures>;
}

/** A random-draw item with the category reviewers gave it and its dates. */
export interface LabelledDraw {
  text: string;
  label: string;
  postedAt: Date | null;
  importedAt: Date;
}

/**
 * Sums the stored day counts into periods and measures, on the random draws
 * of each period, how far keyword counting over- and under-counts: precision
 * and recall of each category's seed terms against the reviewers' verdicts,
 * each with a Wilson 95 % interval. Returns the periods in order and the same
 * figures over all of them.
 */
export function keywordFigures(
  days: KeywordDays,
  seedTerms: Record<string, string[]>,
  draws: readonly LabelledDraw[],
  period: KeywordPeriod,
  by: KeywordDate,
): { periods: KeywordPeriodFigures[]; total: Omit<KeywordPeriodFigures, 'start'> } {
  // The stored counts' categories, matched with the seed terms as they are now (the same unless the counts are stale).
  const matchers = days.categories.map((category) => ({
    category,
    matcher: compileSeedTerms({ [category]: seedTerms[category] ?? [] }),
  }));
  interface Tally {
    items: number;
    matches: number[];
    draws: number;
    matched: number[];
    labelled: number[];
    both: number[];
  }
  const k = days.categories.length;
  const empty = (): Tally => ({
    items: 0,
    matches: new Array<number>(k).fill(0),
    draws: 0,
    matched: new Array<number>(k).fill(0),
    labelled: new Array<number>(k).fill(0),
    both: new Array<number>(k).fill(0),
  });
  const tallies = new Map<string, Tally>();
  const total = empty();
  const at = (start: string) => {
    let t = tallies.get(start);
    if (t === undefined) tallies.set(start, (t = empty()));
    return t;
  };
  for (const [d, counts] of Object.entries(by === 'posted' ? days.posted : days.imported)) {
    const t = at(periodStart(new Date(`${d}T00:00:00Z`), period));
    t.items += counts[0];
    total.items += counts[0];
    for (let c = 0; c < k; c++) {
      t.matches[c] += counts[c + 1];
      total.matches[c] += counts[c + 1];
    }
  }
  for (const draw of draws) {
    const date = by === 'posted' ? draw.postedAt : draw.importedAt;
    if (date === null) continue;
    for (const t of [at(periodStart(date, period)), total]) {
      t.draws++;
      matchers.forEach(({ category, matcher }, c) => {
        const hit = matcher.count(draw.text) > 0;
        const is = draw.label === category;
        if (hit) t.matched[c]++;
        if (is) t.labelled[c]++;
        if (hit && is) t.both[c]++;
      });
    }
  }
  const figures = (t: Tally) => ({
    items: t.items,
    randomVerdicts: t.draws,
    perCategory: Object.fromEntries(
      days.categories.map((category, c) => [
        category,
        { matches: t.matches[c], precision: share(t.both[c], t.matched[c]), recall: share(t.both[c], t.labelled[c]) },
      ]),
    ),
  });
  const periods = [...tallies.entries()]
    .sort(([a], [b]) => (a < b ? -1 : 1))
    .map(([start, t]) => ({ start, ...figures(t) }));
  return { periods, total: figures(total) };
}
