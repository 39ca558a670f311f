import { Inject, Injectable } from '@nestjs/common';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import { Database, DeskDirectory, type DbInt } from '#database';
import { RetrainScheduler } from '#models';
import type { SettleItemDto } from './settle.dto.js';
import { Conflict, InvalidInput, NotFound } from '#errors';

/** A supervisor's settled label of an item. */
export interface SettlementView {
  id: number;
  itemId: number;
  category: string;
  reason: string;
  settledBy: string;
  settledAt: Date;
}

/**
 * Settles an item: the supervisor's label, with a reason, trains and
 * calibrates from then on in place of the verdicts (which all stay in the
 * trail). An item may be settled again; every settlement is kept and the
 * latest counts. Settling never changes the item's draw kind, so an item
 * drawn at random stays a calibration item.
 */
@Injectable()
export class SettlementsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(RetrainScheduler) private readonly retrain: RetrainScheduler,
  ) {}

  async settle(supervisor: Principal, itemId: number, dto: SettleItemDto): Promise<SettlementView> {
    const item = await this.db.queryOne<{ desk_id: DbInt }>(null, 'SELECT desk_id FROM items WHERE id = $1', [itemId]);
    if (!item) throw new NotFound(`no item ${itemId}`);
    const deskId = Number(item.desk_id);
    if (dto.deskId !== undefined && dto.deskId !== deskId)
      throw new InvalidInput(`item ${itemId} belongs to another desk than desk ${dto.deskId}`);
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    if (dto.category.trim().toLowerCase() === 'abstain')
      throw new InvalidInput("abstain cannot be a settled label: settle on one of the desk's categories");
    const category = entry.categories.find((c) => c.name === dto.category);
    if (!category)
      throw new InvalidInput(
        `unknown category ${JSON.stringify(dto.category)}; this desk has: ${entry.categories.map((c) => c.name).join(', ')}`,
      );
    const view = await this.db.write(async (m) => {
      const lock = this.db.lockRows();
      await this.db.query(m, `SELECT id FROM items WHERE id = $1${lock}`, [itemId]);
      // COUNT(*) answers one row.
      const [live] = await this.db.query<{ n: DbInt }>(
        m,
        'SELECT COUNT(*) AS n FROM verdicts WHERE item_id = $1 AND undone_at IS NULL',
        [itemId],
      );
      if (Number(live.n) === 0) throw new Conflict(`item ${itemId} has no live verdict: there is nothing to settle`);
      const before = await this.db.queryOne<{ id: DbInt; category: string; reason: string }>(
        m,
        'SELECT s.id, c.name AS category, s.reason FROM settlements s JOIN categories c ON c.id = s.category_id WHERE s.item_id = $1 ORDER BY s.id DESC LIMIT 1',
        [itemId],
      );
      const now = new Date();
      const [ins] = await this.db.query<{ id: DbInt }>(
        m,
        'INSERT INTO settlements (desk_id, item_id, category_id, reason, settled_by, created_at) VALUES ($1, $2, $3, $4, $5, $6) RETURNING id',
        [deskId, itemId, category.id, dto.reason, supervisor.id, this.db.time(now)],
      );
      const id = Number(ins.id);
      await this.audit.record(m, supervisor, {
        action: 'item.settle',
        entityType: 'item',
        entityId: itemId,
        deskId,
        before: before ? { settlementId: Number(before.id), category: before.category, reason: before.reason } : null,
        after: { settlementId: id, category: category.name, reason: dto.reason },
      });
      return { id, itemId, category: category.name, reason: dto.reason, settledBy: supervisor.name, settledAt: now };
    });
    this.retrain.nudge(deskId, 'settle');
    return view;
  }

  /** Every settlement of the given items, oldest first per item. */
  async forItems(itemIds: number[]): Promise<Map<number, SettlementView[]>> {
    const out = new Map<number, SettlementView[]>();
    if (itemIds.length === 0) return out;
    const placeholders = itemIds.map((_, i) => `$${i + 1}`).join(', ');
    const rows = await this.db.query<{
      id: DbInt;
      item_id: DbInt;
      category: string;
      reason: string;
      settled_by: string;
      created_at: unknown;
    }>(
      null,
      `SELECT s.id, s.item_id, c.name AS category, s.reason, u.name AS settled_by, s.created_at
       FROM settlements s JOIN categories c ON c.id = s.category_id JOIN users u ON u.id = s.settled_by
       WHERE s.item_id IN (${placeholders}) ORDER BY s.item_id, s.id`,
      itemIds,
    );
    for (const r of rows) {
      const list = out.get(Number(r.item_id)) ?? [];
      list.push({
        id: Number(r.id),
        itemId: Number(r.item_id),
        category: r.category,
        reason: r.reason,
        settledBy: r.settled_by,
        settledAt: this.db.parseTime(r.created_at)!,
      });
      out.set(Number(r.item_id), list);
    }
    return out;
  }
}
