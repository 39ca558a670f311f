import { Inject, Injectable } from '@nestjs/common';
import { Database, type DbInt } from '#database';

/** A random-draw item with its label (the latest settlement, else its random verdict) and text. */
export interface RandomLabel {
  itemId: number;
  label: string;
  text: string;
}

/** When an item was posted or imported, as the database returns it. */
export type PeriodBasis = 'posted' | 'imported';

/** An item a version scored: its stored probabilities (JSON text) and its times (ms since 1970, NaN when unknown). */
export interface ScoredRow {
  id: number;
  probabilities: string;
  postedAt: number;
  importedAt: number;
}

/** An open item: whether the version scored it, and its times when it did not (NaN otherwise or when unknown). */
export interface OpenRow {
  id: number;
  scored: boolean;
  postedAt: number;
  importedAt: number;
}

/** A decided item with its times (ms since 1970, NaN when unknown), its label (null for an abstention), whether a uniform random draw decided it. */
export interface DecidedAt {
  id: number;
  postedAt: number;
  importedAt: number;
  label: string | null;
  random: boolean;
  erased: boolean;
}

/**
 * The change marker's one statement (see {@link ScreeningRepository.changeMarker}). Every column it reads of
 * `items` is in the index `ix_items_marker`, so that it counts from the index alone.
 */
export const CHANGE_MARKER_SQL = `SELECT it.n AS items, it.max_id AS item_max, it.open, it.seeded, it.erased, it.scored,
         v.n AS verdicts, v.undone, v.max_id AS verdict_max, s.n AS settlements, s.max_id AS settlement_max
  FROM (SELECT COUNT(*) AS n, MAX(id) AS max_id, SUM(CASE WHEN state <> 'decided' THEN 1 ELSE 0 END) AS open,
               SUM(CASE WHEN state <> 'decided' AND seed_hits > 0 THEN 1 ELSE 0 END) AS seeded,
               SUM(CASE WHEN state <> 'decided' AND priority_model_version = $2 THEN 1 ELSE 0 END) AS scored,
               COUNT(erased_at) AS erased FROM items WHERE desk_id = $1) it,
       (SELECT COUNT(*) AS n, COUNT(undone_at) AS undone, MAX(id) AS max_id FROM verdicts WHERE desk_id = $1) v,
       (SELECT COUNT(*) AS n, MAX(id) AS max_id FROM settlements WHERE desk_id = $1) s`;

/** The SQL of screening: open-pool counts and the labels of the uniform random draws. */
@Injectable()
export class ScreeningRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /**
   * Every item first served by a uniform random draw and decided with a
   * category, with its label: the supervisor's latest settlement, else the
   * latest live verdict of the random draw (second opinions never count, as
   * in training). Abstentions give no label. Erased items are left out:
   * their text is gone, so the model cannot score them.
   */
  async randomLabels(deskId: number): Promise<RandomLabel[]> {
    const verdicts = await this.db.query<{ item_id: DbInt; category: string | null; text: string }>(
      null,
      `SELECT v.item_id, c.name AS category, i.text FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id
       JOIN items i ON i.id = v.item_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL AND i.erased_at IS NULL ORDER BY v.id`,
      [deskId],
    );
    const settled = await this.db.query<{ item_id: DbInt; category: string }>(
      null,
      `SELECT s.item_id, c.name AS category FROM settlements s JOIN categories c ON c.id = s.category_id
       WHERE s.desk_id = $1 AND s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = s.item_id)`,
      [deskId],
    );
    const byItem = new Map<number, { label: string | null; text: string }>();
    for (const r of verdicts) byItem.set(Number(r.item_id), { label: r.category, text: r.text });
    for (const r of settled) {
      const e = byItem.get(Number(r.item_id));
      if (e) e.label = r.category;
    }
    return [...byItem.entries()]
      .filter((x): x is [number, { label: string; text: string }] => x[1].label !== null)
      .map(([itemId, e]) => ({ itemId, label: e.label, text: e.text }));
  }

  /**
   * Everything the cached screening figures of a desk depend on besides its
   * version and settings, read in one statement: counts and largest ids of
   * its items, verdicts and settlements, open and erased items. Every change
   * that decides, reopens, erases, imports or relabels an item changes one of
   * them (verdicts and settlements are only added; an undo sets `undone_at`
   * once; an erasure sets `erased_at` once); the open items the current
   * `version` has scored grow when it scores items imported after it
   * (ScoringService.scoreNew). So an unchanged marker means the
   * open pool and the labels are as they were. The open count and its seed
   * matches come with it.
   */
  async changeMarker(
    deskId: number,
    version: number | null,
  ): Promise<{ marker: string; open: number; seedMatches: number }> {
    const [r] = await this.db.query<Record<string, DbInt | null>>(null, CHANGE_MARKER_SQL, [deskId, version ?? 0]);
    const n = (x: DbInt | null | undefined) => Number(x ?? 0);
    const keys = [
      'items',
      'item_max',
      'open',
      'seeded',
      'erased',
      'scored',
      'verdicts',
      'undone',
      'verdict_max',
    ] as const;
    const marker = [...keys, 'settlements', 'settlement_max'].map((k) => n(r[k])).join(':');
    return { marker, open: n(r.open), seedMatches: n(r.seeded) };
  }

  /**
   * Every item a version scored (open or not), in id order, page by page:
   * its stored probabilities (JSON text) and its times. A published
   * version's predictions do not change, so this is read once per version.
   */
  async *scoredItems(deskId: number, version: number, pageSize = 10_000): AsyncGenerator<ScoredRow[]> {
    for (let after = 0; ;) {
      const rows = await this.db.query<{ id: DbInt; probabilities: string; posted_at: unknown; imported_at: unknown }>(
        null,
        `SELECT p.item_id AS id, p.probabilities, i.posted_at, i.imported_at FROM predictions p JOIN items i ON i.id = p.item_id
         WHERE p.desk_id = $1 AND p.model_version = $2 AND p.item_id > $3 ORDER BY p.item_id LIMIT ${pageSize}`,
        [deskId, version, after],
      );
      if (rows.length > 0)
        yield rows.map((r) => ({
          id: Number(r.id),
          probabilities: r.probabilities,
          postedAt: this.time(r.posted_at),
          importedAt: this.time(r.imported_at),
        }));
      if (rows.length < pageSize) return;
      after = Number(rows[rows.length - 1].id);
    }
  }

  /**
   * The open items of a desk in id order, page by page: whether `version`
   * scored them and, for those it did not, their times (the scored ones'
   * come with {@link scoredItems}).
   */
  async *openItems(deskId: number, version: number | null, pageSize = 20_000): AsyncGenerator<OpenRow[]> {
    for (let after = 0; ;) {
      const rows = await this.db.query<{ id: DbInt; scored: DbInt | null; posted_at: unknown; imported_at: unknown }>(
        null,
        `SELECT i.id, p.item_id AS scored, CASE WHEN p.item_id IS NULL THEN i.posted_at END AS posted_at,
                CASE WHEN p.item_id IS NULL THEN i.imported_at END AS imported_at
         FROM items i LEFT JOIN predictions p ON p.item_id = i.id AND p.model_version = $2
         WHERE i.desk_id = $1 AND i.state <> 'decided' AND i.id > $3 ORDER BY i.id LIMIT ${pageSize}`,
        [deskId, version ?? -1, after],
      );
      if (rows.length > 0)
        yield rows.map((r) => ({
          id: Number(r.id),
          scored: r.scored !== null,
          postedAt: this.time(r.posted_at),
          importedAt: this.time(r.imported_at),
        }));
      if (rows.length < pageSize) return;
      after = Number(rows[rows.length - 1].id);
    }
  }

  /**
   * The decided items of a desk with their time and label: the latest
   * settlement, else the latest live verdict of a first draw (second
   * opinions never give the label, as in training); `random` when a live
   * verdict on a uniform random draw decided it.
   */
  async decidedAt(deskId: number): Promise<DecidedAt[]> {
    const items = await this.db.query<{ id: DbInt; posted_at: unknown; imported_at: unknown; erased_at: unknown }>(
      null,
      `SELECT i.id, i.posted_at, i.imported_at, i.erased_at FROM items i WHERE i.desk_id = $1 AND i.state = 'decided' ORDER BY i.id`,
      [deskId],
    );
    const verdicts = await this.db.query<{ item_id: DbInt; draw: string; category: string | null }>(
      null,
      `SELECT v.item_id, v.draw, c.name AS category FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND v.undone_at IS NULL AND v.draw <> 'second-opinion' ORDER BY v.id`,
      [deskId],
    );
    const settled = await this.db.query<{ item_id: DbInt; category: string }>(
      null,
      `SELECT s.item_id, c.name AS category FROM settlements s JOIN categories c ON c.id = s.category_id
       WHERE s.desk_id = $1 AND s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = s.item_id)`,
      [deskId],
    );
    const label = new Map<number, { label: string | null; random: boolean }>();
    for (const v of verdicts) {
      const prev = label.get(Number(v.item_id));
      label.set(Number(v.item_id), { label: v.category, random: (prev?.random ?? false) || v.draw === 'random' });
    }
    for (const s of settled) {
      const e = label.get(Number(s.item_id));
      if (e) e.label = s.category;
    }
    return items.map((i) => {
      const l = label.get(Number(i.id));
      return {
        id: Number(i.id),
        postedAt: this.time(i.posted_at),
        importedAt: this.time(i.imported_at),
        label: l?.label ?? null,
        random: l?.random ?? false,
        erased: i.erased_at !== null,
      };
    });
  }

  /** The texts of some items (to score decided random draws under the current version). */
  async texts(ids: number[]): Promise<Map<number, string>> {
    const out = new Map<number, string>();
    for (let i = 0; i < ids.length; i += 500) {
      const part = ids.slice(i, i + 500);
      const rows = await this.db.query<{ id: DbInt; text: string }>(
        null,
        `SELECT id, text FROM items WHERE id IN (${part.map((_, k) => `$${k + 1}`).join(', ')})`,
        part,
      );
      for (const r of rows) out.set(Number(r.id), r.text);
    }
    return out;
  }

  private time(value: unknown): number {
    return this.db.parseTime(value)?.getTime() ?? Number.NaN;
  }
}
