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

/** An open item with its time and the current version's stored probabilities (null when it has none). */
export interface OpenAt {
  id: number;
  at: unknown;
  probabilities: string | null;
}

/** A decided item with its time, its label (null for an abstention), whether a uniform random draw decided it. */
export interface DecidedAt {
  id: number;
  at: unknown;
  label: string | null;
  random: boolean;
  erased: boolean;
}

/** The SQL of screening: open-pool counts and the labels of the uniform random draws. */
@Injectable()
export class ScreeningRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** Open items (not decided; leased ones included) and, of them, those that match a seed term. */
  async openCounts(deskId: number): Promise<{ open: number; seedMatches: number }> {
    const [r] = await this.db.query<{ open: DbInt; seeded: DbInt | null }>(
      null,
      `SELECT COUNT(*) AS open, SUM(CASE WHEN seed_hits > 0 THEN 1 ELSE 0 END) AS seeded
       FROM items WHERE desk_id = $1 AND state <> 'decided'`,
      [deskId],
    );
    return { open: Number(r.open), seedMatches: Number(r.seeded ?? 0) };
  }

  /**
   * Every item first served by a uniform random draw and decided with a
   * category, with its label: the supervisor's latest settlement, else the
   * latest live verdict of the random draw (second opinions never count, as
   * in training). Abstentions give no label.
   */
  async randomLabels(deskId: number): Promise<RandomLabel[]> {
    const verdicts = await this.db.query<{ item_id: DbInt; category: string | null; text: string }>(
      null,
      `SELECT v.item_id, c.name AS category, i.text FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id
       JOIN items i ON i.id = v.item_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL ORDER BY v.id`,
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

  /** The open items of a desk with their time and stored probabilities under `version`, page by page. */
  async *openAt(deskId: number, version: number | null, by: PeriodBasis, pageSize = 10_000): AsyncGenerator<OpenAt[]> {
    const column = by === 'posted' ? 'i.posted_at' : 'i.imported_at';
    for (let after = 0; ;) {
      const rows = await this.db.query<{ id: DbInt; at: unknown; probabilities: string | null }>(
        null,
        `SELECT i.id, ${column} AS at, p.probabilities FROM items i
         LEFT JOIN predictions p ON p.item_id = i.id AND p.model_version = $2
         WHERE i.desk_id = $1 AND i.state <> 'decided' AND i.id > $3 ORDER BY i.id LIMIT ${pageSize}`,
        [deskId, version ?? -1, after],
      );
      if (rows.length > 0) yield rows.map((r) => ({ id: Number(r.id), at: r.at, probabilities: r.probabilities }));
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
  async decidedAt(deskId: number, by: PeriodBasis): Promise<DecidedAt[]> {
    const column = by === 'posted' ? 'i.posted_at' : 'i.imported_at';
    const items = await this.db.query<{ id: DbInt; at: unknown; erased_at: unknown }>(
      null,
      `SELECT i.id, ${column} AS at, i.erased_at FROM items i WHERE i.desk_id = $1 AND i.state = 'decided' ORDER BY i.id`,
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
        at: i.at,
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
}
