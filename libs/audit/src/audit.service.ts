import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditRepository, type AuditEvent, type AuditPageQuery } from './audit.repository.js';

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
  constructor(@Inject(AuditRepository) private readonly events: AuditRepository) {}

  async record(m: EntityManager, actor: AuditActor, rec: AuditRecord): Promise<void> {
    await this.events.append(m, {
      at: new Date(),
      actorId: actor.id,
      actorName: actor.name,
      action: rec.action,
      entityType: rec.entityType,
      entityId: String(rec.entityId),
      deskId: rec.deskId ?? null,
      before: rec.before ?? null,
      after: rec.after ?? null,
    });
  }

  /** A page of the trail, newest first (see {@link AuditPageQuery}). */
  page(q: AuditPageQuery): Promise<AuditEvent[]> {
    return this.events.page(q);
  }
}
