import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskDirectory, type DbInt } from '#database';
import { alphaBootstrap, cohenKappa, createRng, fleissKappa, krippendorffAlpha } from '#learning';
import { NotFound } from '#errors';

/** The bootstrap's seed and size are fixed so the same verdicts always give the same figures. */
export const AGREEMENT_BOOTSTRAP_SEED = 20_260_101;
export const AGREEMENT_BOOTSTRAP_RESAMPLES = 1000;

/** How Fleiss' kappa treats items with an unusual number of verdicts (stated in every answer). */
export const FLEISS_UNEQUAL_HANDLING =
  "Fleiss' kappa needs the same number of verdicts on every item: it is computed over the items with the most common number " +
  "(the larger one on a tie) and leaves the others out (itemsLeftOut); Krippendorff's alpha and Cohen's kappa use every item.";

/** Agreement between reviewers on a desk. Undefined coefficients (no variation to measure) are null. */
export interface DeskAgreement {
  deskId: number;
  /** Items with two or more live verdicts that name a category; abstentions are missing values. */
  items: number;
  /** Live category verdicts on those items. */
  verdicts: number;
  /** Live abstentions on items that also carry two or more category verdicts (left out as missing values). */
  abstentions: number;
  reviewers: number;
  cohen: Array<{
    reviewers: [string, string];
    items: number;
    kappa: number | null;
    observed: number;
    expected: number;
  }>;
  fleiss: {
    kappa: number | null;
    observed: number | null;
    expected: number | null;
    items: number;
    itemsLeftOut: number;
    verdictsPerItem: number | null;
    verdicts: number;
    unequalVerdicts: string;
  };
  krippendorff: {
    level: 'nominal';
    alpha: number | null;
    observedDisagreement: number | null;
    expectedDisagreement: number | null;
    interval: {
      lower: number | null;
      upper: number | null;
      confidence: number;
      resamples: number;
      seed: number;
      undefinedResamples: number;
    };
    items: number;
    pairableValues: number;
  };
  perCategory: Array<{ category: string; verdicts: number; items: number; fleissKappa: number | null }>;
}

const finite = (x: number): number | null => (Number.isFinite(x) ? x : null);

/**
 * Cohen's kappa per pair of reviewers, Fleiss' kappa overall and per
 * category, and Krippendorff's alpha with its bootstrap interval, over the
 * items of a desk that two or more reviewers decided. The math lives in
 * `libs/learning`; here the verdicts are read and laid out in a fixed order
 * (items by id, reviewers by name, categories in the desk's order), so the
 * same data gives byte-identical JSON.
 */
@Injectable()
export class AgreementService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
  ) {}

  /**
   * @param asOf count the verdicts as they stood at that moment (given by
   *   then, not undone by then), e.g. a model version's publication, so a
   *   report made later gives the same figures; default: as they stand now
   */
  async forDesk(deskId: number, asOf?: Date): Promise<DeskAgreement> {
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    const categories = entry.categories.map((c) => c.name);
    const live = (v: string) =>
      asOf ? `${v}created_at <= $3 AND (${v}undone_at IS NULL OR ${v}undone_at > $3)` : `${v}undone_at IS NULL`;
    // The archive account is no reviewer: its imported labels never enter agreement (nor does it pair with anyone).
    const person = (v: string) => `${v}reviewer_id NOT IN (SELECT id FROM users WHERE is_system)`;
    const rows = await this.db.query<{ item_id: DbInt; reviewer: string; category: string | null }>(
      null,
      `SELECT v.item_id, u.name AS reviewer, c.name AS category
       FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND ${live('v.')} AND ${person('v.')}
         AND v.item_id IN (SELECT item_id FROM verdicts WHERE desk_id = $1 AND ${live('')} AND ${person('')} AND abstain = $2 GROUP BY item_id HAVING COUNT(*) >= 2)
       ORDER BY v.item_id, u.name`,
      asOf ? [deskId, false, this.db.time(asOf)] : [deskId, false],
    );
    const byItem = new Map<number, Map<string, string>>();
    let abstentions = 0;
    for (const r of rows) {
      if (r.category === null) {
        abstentions++;
        continue;
      }
      const id = Number(r.item_id);
      let item = byItem.get(id);
      if (!item) byItem.set(id, (item = new Map<string, string>()));
      item.set(r.reviewer, r.category);
    }
    const items = [...byItem.keys()].sort((a, b) => a - b).map((id) => byItem.get(id)!);
    const reviewers = [...new Set(items.flatMap((i) => [...i.keys()]))].sort();
    const verdicts = items.reduce((s, i) => s + i.size, 0);
    const fleiss = this.fleiss(items, categories);
    return {
      deskId,
      items: items.length,
      verdicts,
      abstentions,
      reviewers: reviewers.length,
      cohen: this.pairs(items, reviewers),
      fleiss: fleiss.overall,
      krippendorff: this.krippendorff(items, reviewers),
      perCategory: categories.map((category, j) => ({
        category,
        verdicts: items.reduce((s, i) => s + [...i.values()].filter((c) => c === category).length, 0),
        items: items.filter((i) => [...i.values()].includes(category)).length,
        fleissKappa: fleiss.perCategory[j] ?? null,
      })),
    };
  }

  private pairs(items: Array<Map<string, string>>, reviewers: string[]): DeskAgreement['cohen'] {
    const out: DeskAgreement['cohen'] = [];
    for (let i = 0; i < reviewers.length; i++) {
      for (let j = i + 1; j < reviewers.length; j++) {
        const a: string[] = [];
        const b: string[] = [];
        for (const item of items) {
          const x = item.get(reviewers[i]);
          const y = item.get(reviewers[j]);
          if (x !== undefined && y !== undefined) {
            a.push(x);
            b.push(y);
          }
        }
        if (a.length === 0) continue;
        const k = cohenKappa(a, b);
        out.push({
          reviewers: [reviewers[i], reviewers[j]],
          items: k.n,
          kappa: finite(k.kappa),
          observed: k.observed,
          expected: k.expected,
        });
      }
    }
    return out;
  }

  private fleiss(
    items: Array<Map<string, string>>,
    categories: string[],
  ): { overall: DeskAgreement['fleiss']; perCategory: Array<number | null> } {
    const frequency = new Map<number, number>();
    for (const i of items) frequency.set(i.size, (frequency.get(i.size) ?? 0) + 1);
    let raters: number | null = null;
    for (const [size, n] of frequency)
      if (raters === null || n > frequency.get(raters)! || (n === frequency.get(raters)! && size > raters))
        raters = size;
    const used = items.filter((i) => i.size === raters);
    const empty = {
      kappa: null,
      observed: null,
      expected: null,
      items: 0,
      itemsLeftOut: items.length,
      verdictsPerItem: raters,
      verdicts: 0,
      unequalVerdicts: FLEISS_UNEQUAL_HANDLING,
    };
    if (used.length === 0 || categories.length < 2) return { overall: empty, perCategory: categories.map(() => null) };
    const counts = used.map((i) => categories.map((c) => [...i.values()].filter((x) => x === c).length));
    const f = fleissKappa(counts);
    return {
      overall: {
        kappa: finite(f.kappa),
        observed: f.observed,
        expected: f.expected,
        items: used.length,
        itemsLeftOut: items.length - used.length,
        verdictsPerItem: raters,
        verdicts: used.length * raters!,
        unequalVerdicts: FLEISS_UNEQUAL_HANDLING,
      },
      perCategory: f.perCategory.map(finite),
    };
  }

  private krippendorff(items: Array<Map<string, string>>, reviewers: string[]): DeskAgreement['krippendorff'] {
    const table = items.map((i) => reviewers.map((r) => i.get(r) ?? null));
    const interval = { confidence: 0.95, resamples: AGREEMENT_BOOTSTRAP_RESAMPLES, seed: AGREEMENT_BOOTSTRAP_SEED };
    if (reviewers.length < 2) {
      return {
        level: 'nominal',
        alpha: null,
        observedDisagreement: null,
        expectedDisagreement: null,
        interval: { lower: null, upper: null, ...interval, undefinedResamples: 0 },
        items: 0,
        pairableValues: 0,
      };
    }
    const a = krippendorffAlpha(table, 'nominal');
    const boot = alphaBootstrap(table, {
      level: 'nominal',
      resamples: AGREEMENT_BOOTSTRAP_RESAMPLES,
      confidence: 0.95,
      rng: createRng(AGREEMENT_BOOTSTRAP_SEED),
    });
    return {
      level: 'nominal',
      alpha: finite(a.alpha),
      observedDisagreement: finite(a.observedDisagreement),
      expectedDisagreement: finite(a.expectedDisagreement),
      interval: {
        lower: finite(boot.lower),
        upper: finite(boot.upper),
        ...interval,
        undefinedResamples: boot.undefinedResamples,
      },
      items: a.pairableUnits,
      pairableValues: a.pairableValues,
    };
  }
}
