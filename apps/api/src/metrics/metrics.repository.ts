import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity, type DbInt } from '#database';

/** All SQL of `GET /metrics`: the per-desk figures read at each scrape. */
@Injectable()
export class MetricsRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** When each desk's current version was published (desks without a version are absent). */
  async currentVersionsPublished(): Promise<Array<{ deskId: number; publishedAt: Date | null }>> {
    const rows = await this.db.query<{ desk_id: DbInt; published_at: unknown }>(
      null,
      `SELECT d.id AS desk_id, mv.published_at FROM desks d
       JOIN model_versions mv ON mv.desk_id = d.id AND mv.version = d.current_model_version`,
    );
    return rows.map((r) => ({ deskId: Number(r.desk_id), publishedAt: this.db.parseTime(r.published_at) }));
  }

  /** The number of items of each desk in each state. */
  async itemsByState(): Promise<Array<{ deskId: number; state: string; items: number }>> {
    const rows = await this.db.query<{ desk_id: DbInt; state: string; n: DbInt }>(
      null,
      'SELECT desk_id, state, COUNT(*) AS n FROM items GROUP BY desk_id, state',
    );
    return rows.map((r) => ({ deskId: Number(r.desk_id), state: r.state, items: Number(r.n) }));
  }

  /** Every desk, by id. */
  desks(): Promise<DeskEntity[]> {
    return this.db.manager.find(DeskEntity, { order: { id: 'ASC' } });
  }
}
