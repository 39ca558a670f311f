import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database, type DbInt } from '#database';

/** One line of the audit trail as stored: `before` and `after` as JSON text. */
export interface AuditRow {
  at: Date;
  actorId: number | null;
  actorName: string;
  action: string;
  entityType: string;
  entityId: string;
  deskId: number | null;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
}

/** One line of the audit trail as read back. */
export interface AuditEvent {
  id: number;
  at: Date | null;
  actorId: number | null;
  actor: string;
  action: string;
  entityType: string;
  entityId: string;
  deskId: number | null;
  before: unknown;
  after: unknown;
}

/** Which events a page holds: one desk's or those of some desks (all when both are absent), older than `before`. */
export interface AuditPageQuery {
  deskId?: number;
  deskIds?: readonly number[];
  before?: number;
  limit: number;
}

interface EventRow {
  id: DbInt;
  at: unknown;
  actor_id: DbInt | null;
  actor_name: string;
  action: string;
  entity_type: string;
  entity_id: string;
  desk_id: DbInt | null;
  before: string | null;
  after: string | null;
}

/** All SQL of `audit_events`: the append and the newest-first pages. */
@Injectable()
export class AuditRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  async append(m: EntityManager, row: AuditRow): Promise<void> {
    // Raw SQL: this runs inside every verdict's transaction, and TypeORM's insert builder costs more than the row.
    await this.db.query(
      m,
      `INSERT INTO audit_events (at, actor_id, actor_name, action, entity_type, entity_id, desk_id, before, after)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)`,
      [
        this.db.time(row.at),
        row.actorId,
        row.actorName,
        row.action,
        row.entityType,
        row.entityId,
        row.deskId,
        row.before ? JSON.stringify(row.before) : null,
        row.after ? JSON.stringify(row.after) : null,
      ],
    );
  }

  /** A page of events, newest first. An empty `deskIds` list selects nothing. */
  async page(q: AuditPageQuery): Promise<AuditEvent[]> {
    if (q.deskIds?.length === 0) return [];
    const params: unknown[] = [];
    const where: string[] = [];
    if (q.deskId !== undefined) {
      params.push(q.deskId);
      where.push(`desk_id = $${params.length}`);
    }
    if (q.deskIds) {
      where.push(`desk_id IN (${this.db.inList(q.deskIds.length, params.length + 1)})`);
      params.push(...q.deskIds);
    }
    if (q.before !== undefined) {
      params.push(q.before);
      where.push(`id < $${params.length}`);
    }
    params.push(q.limit);
    const rows = await this.db.query<EventRow>(
      null,
      `SELECT id, at, actor_id, actor_name, action, entity_type, entity_id, desk_id, before, after FROM audit_events
       ${where.length ? `WHERE ${where.join(' AND ')}` : ''} ORDER BY id DESC LIMIT $${params.length}`,
      params,
    );
    return rows.map((r) => ({
      id: Number(r.id),
      at: this.db.parseTime(r.at),
      actorId: r.actor_id === null ? null : Number(r.actor_id),
      actor: r.actor_name,
      action: r.action,
      entityType: r.entity_type,
      entityId: r.entity_id,
      deskId: r.desk_id === null ? null : Number(r.desk_id),
      before: r.before ? (JSON.parse(r.before) as unknown) : null,
      after: r.after ? (JSON.parse(r.after) as unknown) : null,
    }));
  }
}
