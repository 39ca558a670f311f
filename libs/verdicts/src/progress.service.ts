import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity } from '#database';
import { NotFound } from '#errors';

export interface DeskProgress {
  deskId: number;
  /** `erased`: tombstones (text erased), whatever their state; the other counts leave them out. */
  items: { total: number; open: number; leased: number; decided: number; erased: number };
  verdicts: {
    total: number;
    byCategory: Record<string, number>;
    abstain: number;
    byDraw: Record<string, number>;
    undone: number;
  };
  reviewersActiveLastHour: number;
  /** Per reviewer counts; only for roles that may see other reviewers' work. */
  reviewers?: Array<{ name: string; verdicts: number; lastAt: Date | null }>;
  currentModelVersion: number | null;
}

/** Counts behind `GET /api/desks/:deskId/progress`. */
@Injectable()
export class ProgressService {
  constructor(@Inject(Database) private readonly db: Database) {}

  async progress(deskId: number, withReviewers: boolean): Promise<DeskProgress> {
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFound(`no desk ${deskId}`);
    const q = <T>(sql: string, params: unknown[]) => this.db.query<T>(null, sql, params);
    const now = this.db.time(new Date());
    const [states, cats, draws, undone, active] = await Promise.all([
      q<{ state: string; leased: number | string; erased: number | string; n: number | string }>(
        `SELECT state, CASE WHEN state = 'leased' AND leased_until > $2 THEN 1 ELSE 0 END AS leased, CASE WHEN erased_at IS NULL THEN 0 ELSE 1 END AS erased, COUNT(*) AS n
         FROM items WHERE desk_id = $1
         GROUP BY state, CASE WHEN state = 'leased' AND leased_until > $2 THEN 1 ELSE 0 END, CASE WHEN erased_at IS NULL THEN 0 ELSE 1 END`,
        [deskId, now],
      ),
      q<{ name: string | null; n: number | string }>(
        `SELECT c.name, COUNT(*) AS n FROM verdicts v LEFT JOIN categories c ON c.id = v.category_id WHERE v.desk_id = $1 AND v.undone_at IS NULL GROUP BY c.name`,
        [deskId],
      ),
      q<{ draw: string; n: number | string }>(
        `SELECT draw, COUNT(*) AS n FROM verdicts WHERE desk_id = $1 AND undone_at IS NULL GROUP BY draw`,
        [deskId],
      ),
      q<{ n: number | string }>(`SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1 AND undone_at IS NOT NULL`, [
        deskId,
      ]),
      q<{ n: number | string }>(
        `SELECT COUNT(DISTINCT reviewer_id) AS n FROM verdicts WHERE desk_id = $1 AND created_at > $2
           AND reviewer_id NOT IN (SELECT id FROM users WHERE is_system)`,
        [deskId, this.db.time(new Date(Date.now() - 3600_000))],
      ),
    ]);
    const items = { total: 0, open: 0, leased: 0, decided: 0, erased: 0 };
    for (const s of states) {
      const n = Number(s.n);
      items.total += n;
      // Erased items have left the queue, decided or not: counted apart.
      if (Number(s.erased) === 1) items.erased += n;
      else if (s.state === 'decided') items.decided += n;
      else if (Number(s.leased) === 1) items.leased += n;
      else items.open += n;
    }
    const byCategory: Record<string, number> = {};
    let abstain = 0;
    for (const c of cats) {
      if (c.name === null) abstain += Number(c.n);
      else byCategory[c.name] = Number(c.n);
    }
    const byDraw: Record<string, number> = { seed: 0, uncertainty: 0, random: 0, 'second-opinion': 0 };
    for (const d of draws) byDraw[d.draw] = Number(d.n);
    const total = Object.values(byCategory).reduce((a, b) => a + b, 0) + abstain;
    const out: DeskProgress = {
      deskId,
      items,
      verdicts: { total, byCategory, abstain, byDraw, undone: Number(undone[0]?.n ?? 0) },
      reviewersActiveLastHour: Number(active[0]?.n ?? 0),
      currentModelVersion: desk.currentModelVersion,
    };
    if (withReviewers) {
      // People only: the archive account's imported labels count in `verdicts` (by draw), not as a reviewer's work.
      const rows = await q<{ name: string; n: number | string; last_at: unknown }>(
        `SELECT u.name, COUNT(*) AS n, MAX(v.created_at) AS last_at FROM verdicts v JOIN users u ON u.id = v.reviewer_id WHERE v.desk_id = $1 AND v.undone_at IS NULL AND NOT u.is_system GROUP BY u.name ORDER BY u.name`,
        [deskId],
      );
      out.reviewers = rows.map((r) => ({ name: r.name, verdicts: Number(r.n), lastAt: this.db.parseTime(r.last_at) }));
    }
    return out;
  }
}
