import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity, type DbInt } from '#database';
import { compileSeedTerms } from '#learning';

const CHUNK = 1000;

/**
 * Recounts seed-term matches of a desk's open items after its seed terms
 * changed. Items already prioritised by a model keep their priority; the
 * cold-start priority is the match count.
 */
@Injectable()
export class ReseedService {
  constructor(@Inject(Database) private readonly db: Database) {}

  async run(deskId: number): Promise<number> {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) return 0;
    const matcher = compileSeedTerms(desk.seedTerms);
    let after = 0;
    let updated = 0;
    for (;;) {
      const rows: Array<{ id: DbInt; text: string; seed_hits: DbInt; priority_model_version: DbInt | null }> =
        await this.db.query(
          null,
          `SELECT id, text, seed_hits, priority_model_version FROM items WHERE desk_id = $1 AND state <> 'decided' AND id > $2 ORDER BY id LIMIT ${CHUNK}`,
          [deskId, after],
        );
      if (rows.length === 0) return updated;
      after = Number(rows[rows.length - 1].id);
      const changes = rows
        .map((r) => ({ r, hits: matcher.count(r.text) }))
        .filter(({ r, hits }) => hits !== Number(r.seed_hits));
      if (changes.length === 0) continue;
      await this.db.write(async (m) => {
        for (const { r, hits } of changes) {
          if (r.priority_model_version === null)
            await this.db.query(m, `UPDATE items SET seed_hits = $1, priority = $2 WHERE id = $3`, [hits, hits, r.id]);
          else await this.db.query(m, `UPDATE items SET seed_hits = $1 WHERE id = $2`, [hits, r.id]);
        }
      });
      updated += changes.length;
    }
  }
}
