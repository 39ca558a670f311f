import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { Database } from '#database';

/** Who did something: a signed-in user, or an operator command (id null). */
export interface AuditActor {
  id: number | null;
  name: string;
}

export interface AuditRecord {
  action: string;
  entityType: string;
  entityId: string | number;
  deskId?: number | null;
  before?: Record<string, unknown> | null;
  after?: Record<string, unknown> | null;
}

/**
 * Writes the append-only audit trail. Always called with the transaction's
 * manager of the change it records, so a change and its trail line land
 * together or not at all.
 */
@Injectable()
export class AuditService {
  constructor(@Inject(Database) private readonly db: Database) {}

  async record(m: EntityManager, actor: AuditActor, rec: AuditRecord): Promise<void> {
    // Raw SQL: this runs inside every verdict's transaction, and TypeORM's insert builder costs more than the row.
    await this.db.query(
      m,
      'INSERT INTO audit_events (at, actor_id, actor_name, action, entity_type, entity_id, desk_id, before, after) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)',
      [
        this.db.time(new Date()),
        actor.id,
        actor.name,
        rec.action,
        rec.entityType,
        String(rec.entityId),
        rec.deskId ?? null,
        rec.before ? JSON.stringify(rec.before) : null,
        rec.after ? JSON.stringify(rec.after) : null,
      ],
    );
  }
}
