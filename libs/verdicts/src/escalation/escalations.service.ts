import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, type DbInt } from '#database';
import { JOBS, JobQueueService, type NotifyUrgentPayload } from '#queues';
import { Conflict, NotFound } from '#errors';

/** An escalation just written inside a verdict's transaction: what the webhook announces once it commits. */
export type RaisedEscalation = NotifyUrgentPayload;

export interface UrgentItem {
  escalationId: number;
  itemId: number;
  externalId: string | null;
  text: string;
  erased: boolean;
  reason: string;
  raisedBy: string;
  raisedAt: Date;
  category: string | null;
}

/**
 * Escalations: a reviewer marks an item urgent with a verdict and a short
 * reason; supervisors and auditors see the items waiting; a supervisor
 * acknowledges them. Each step is one transaction with its audit event. When
 * `URGENT_WEBHOOK_URL` is set, each new escalation is announced there (ids
 * only) by a queued job that retries a failed delivery.
 */
@Injectable()
export class EscalationsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Writes an escalation and its audit event in the verdict's transaction `m`. */
  async raise(
    m: EntityManager,
    reviewer: Principal,
    e: { deskId: number; itemId: number; verdictId: number; reason: string; at: Date },
  ): Promise<RaisedEscalation> {
    const [row] = await this.db.query<{ id: DbInt }>(
      m,
      `INSERT INTO escalations (desk_id, item_id, verdict_id, reason, raised_by, raised_at, acknowledged_by, acknowledged_at)
       VALUES ($1, $2, $3, $4, $5, $6, NULL, NULL) RETURNING id`,
      [e.deskId, e.itemId, e.verdictId, e.reason, reviewer.id, this.db.time(e.at)],
    );
    const escalationId = Number(row.id);
    await this.audit.record(m, reviewer, {
      action: 'item.urgent',
      entityType: 'item',
      entityId: e.itemId,
      deskId: e.deskId,
      after: { escalationId, verdictId: e.verdictId, reason: e.reason },
    });
    return {
      escalationId,
      deskId: e.deskId,
      itemId: e.itemId,
      verdictId: e.verdictId,
      raisedAt: e.at.toISOString(),
    };
  }

  /**
   * After the verdict's transaction committed: queues the webhook announcement
   * when one is configured. The escalation is stored whatever happens here;
   * a Redis that is down loses only the announcement, never the escalation.
   */
  async announce(raised: RaisedEscalation): Promise<void> {
    if (this.config.urgentWebhookUrl === null) return;
    await this.jobs.add(JOBS.notifyUrgent, raised);
  }

  /** The items of a desk marked urgent and not yet acknowledged, the most recent first. */
  async waiting(deskId: number): Promise<{ waiting: number; items: UrgentItem[] }> {
    const rows = await this.db.query<{
      id: DbInt;
      item_id: DbInt;
      external_id: string | null;
      text: string;
      erased_at: unknown;
      reason: string;
      raised_by: string;
      raised_at: unknown;
      category: string | null;
    }>(
      null,
      `SELECT e.id, e.item_id, i.external_id, i.text, i.erased_at, e.reason, u.name AS raised_by, e.raised_at, c.name AS category
       FROM escalations e JOIN items i ON i.id = e.item_id JOIN users u ON u.id = e.raised_by
       JOIN verdicts v ON v.id = e.verdict_id LEFT JOIN categories c ON c.id = v.category_id
       WHERE e.desk_id = $1 AND e.acknowledged_at IS NULL ORDER BY e.id DESC`,
      [deskId],
    );
    const items = rows.map((r) => ({
      escalationId: Number(r.id),
      itemId: Number(r.item_id),
      externalId: r.external_id,
      text: r.text,
      erased: r.erased_at !== null,
      reason: r.reason,
      raisedBy: r.raised_by,
      raisedAt: this.db.parseTime(r.raised_at)!,
      category: r.category,
    }));
    return { waiting: items.length, items };
  }

  /** Acknowledges every waiting escalation of an item; 404 when it was never marked urgent, 409 when none waits. */
  async acknowledge(
    supervisor: Principal,
    itemId: number,
  ): Promise<{ itemId: number; escalationIds: number[]; acknowledgedBy: string; acknowledgedAt: Date }> {
    return this.db.write(async (m) => {
      const lock = this.db.lockRows();
      const rows = await this.db.query<{ id: DbInt; desk_id: DbInt; acknowledged_at: unknown }>(
        m,
        `SELECT id, desk_id, acknowledged_at FROM escalations WHERE item_id = $1 ORDER BY id${lock}`,
        [itemId],
      );
      if (rows.length === 0) throw new NotFound(`item ${itemId} was never marked urgent`);
      const open = rows.filter((r) => r.acknowledged_at === null).map((r) => Number(r.id));
      if (open.length === 0) throw new Conflict(`item ${itemId} is acknowledged already: nothing waits`);
      const now = new Date();
      await this.db.query(
        m,
        `UPDATE escalations SET acknowledged_by = $1, acknowledged_at = $2 WHERE item_id = $3 AND acknowledged_at IS NULL`,
        [supervisor.id, this.db.time(now), itemId],
      );
      await this.audit.record(m, supervisor, {
        action: 'item.acknowledge',
        entityType: 'item',
        entityId: itemId,
        deskId: Number(rows[0].desk_id),
        after: { escalationIds: open },
      });
      return { itemId, escalationIds: open, acknowledgedBy: supervisor.name, acknowledgedAt: now };
    });
  }
}
