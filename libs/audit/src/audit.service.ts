import { Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditEventEntity } from '#database';

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
  async record(m: EntityManager, actor: AuditActor, rec: AuditRecord): Promise<void> {
    const row: Omit<AuditEventEntity, 'id'> = {
      at: new Date(),
      actorId: actor.id,
      actorName: actor.name,
      action: rec.action,
      entityType: rec.entityType,
      entityId: String(rec.entityId),
      deskId: rec.deskId ?? null,
      before: rec.before ?? null,
      after: rec.after ?? null,
    };
    // TypeORM's deep-partial type cannot express JSON columns; the row is fully typed above.
    await m.insert(AuditEventEntity, row as never);
  }
}
