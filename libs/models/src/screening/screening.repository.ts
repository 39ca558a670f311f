import { Inject, Injectable } from '@nestjs/common';
import { Database, type DbInt } from '#database';

/** A random-draw item with its label (the latest settlement, else its random verdict) and text. */
export interface RandomLabel {
  itemId: number;
  label: string;
  text: string;
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
}
