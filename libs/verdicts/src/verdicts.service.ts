import { Inject, Injectable, Logger } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import {
  Database,
  DeskDirectory,
  type DbInt,
  isUniqueViolation,
  URGENT_REASON_MAX,
  VerdictEntity,
  type DrawKind,
  type VerdictDrawKind,
  type ShownPrediction,
} from '#database';
import { LeasesService, type LeaseGrant } from '#leases';
import { RetrainScheduler } from '#models';
import type { CreateVerdictDto } from './verdict.dto.js';
import type { TrailFilter } from './trail/trail.service.js';
import { EscalationsService } from './escalation/escalations.service.js';
import { Conflict, InvalidInput, NotAllowed, NotFound } from '#errors';

/** The trimmed reason of an urgent verdict, or null for a verdict that is not urgent; refuses what does not fit. */
export function checkUrgent(dto: Pick<CreateVerdictDto, 'urgent' | 'urgentReason'>): string | null {
  const reason = dto.urgentReason?.trim();
  if (dto.urgent !== true) {
    if (dto.urgentReason !== undefined)
      throw new InvalidInput('urgentReason: only with urgent: true (the reason of an escalation)');
    return null;
  }
  if (reason === undefined || reason === '')
    throw new InvalidInput(
      `urgentReason: required with urgent: true, a few words (1 to ${URGENT_REASON_MAX} characters) saying why`,
    );
  if (reason.length > URGENT_REASON_MAX)
    throw new InvalidInput(
      `urgentReason: at most ${URGENT_REASON_MAX} characters (got ${reason.length}); say why in a few words and use the note for more`,
    );
  return reason;
}

/** A verdict as the API shows it. */
export interface VerdictView {
  id: number;
  deskId: number;
  itemId: number;
  reviewer: string;
  category: string | null;
  abstain: boolean;
  clientId: string;
  modelVersion: number | null;
  shownSet: string[] | null;
  shownCall: VerdictEntity['shownCall'];
  elapsedMs: number | null;
  note: string | null;
  simulated: boolean;
  createdAt: Date;
  undoneAt: Date | null;
}

interface LeaseAndItem {
  desk_id: DbInt;
  item_id: DbInt;
  reviewer_id: DbInt;
  draw: DrawKind;
  prediction: string | null;
  closed_at: unknown;
  closed_reason: 'verdict' | 'returned' | null;
  state: string;
  item_lease_id: string | null;
  leased_until: unknown;
  erased_at: unknown;
  existing_id: DbInt | null;
  existing_item: DbInt | null;
  so_state: string | null;
  so_lease_id: string | null;
  so_leased_until: unknown;
}

/** A verdict in a desk's list for supervisors and auditors: with its draw and whether the item was erased. */
export interface DeskVerdictView extends VerdictView {
  draw: VerdictDrawKind;
  itemErasedAt: Date | null;
}

/** A row of {@link VerdictsService.listWhere}'s query. */
interface VerdictRow {
  id: DbInt;
  desk_id: DbInt;
  item_id: DbInt;
  reviewer: string;
  category: string | null;
  abstain: boolean | number;
  client_id: string;
  model_version: DbInt | null;
  shown_set: string | null;
  shown_call: VerdictView['shownCall'];
  elapsed_ms: DbInt | null;
  note: string | null;
  simulated: boolean | number;
  created_at: unknown;
  undone_at: unknown;
  draw?: VerdictDrawKind;
  item_erased_at?: unknown;
}

/** Source of uniform numbers in [0, 1) that decides which decided items get a second opinion; injectable for tests. */
export const SECOND_OPINION_RANDOM = Symbol('SECOND_OPINION_RANDOM');

/** Receives verdicts: idempotent by client id, never lost, with what was shown at the time. */
@Injectable()
export class VerdictsService {
  private readonly logger = new Logger('Verdicts');

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(RetrainScheduler) private readonly retrain: RetrainScheduler,
    @Inject(LeasesService) private readonly leases: LeasesService,
    @Inject(SECOND_OPINION_RANDOM) private readonly random: () => number,
    @Inject(EscalationsService) private readonly escalations: EscalationsService,
  ) {}

  /**
   * Records a verdict; `replayed` is true when the client id was seen before and nothing was written.
   * `simulated` marks a verdict given by the demo's simulated reviewer, in the verdict row and its audit event.
   */
  async submit(
    reviewer: Principal,
    deskId: number,
    dto: CreateVerdictDto,
    options: { simulated?: boolean } = {},
  ): Promise<{ verdict: VerdictView; replayed: boolean }> {
    const simulated = options.simulated === true;
    if ((dto.category === undefined) === (dto.abstain === undefined)) {
      throw new InvalidInput('give exactly one of: category (a category name of the desk), or abstain: true');
    }
    const urgentReason = checkUrgent(dto);
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    let categoryId: number | null = null;
    if (dto.category !== undefined) {
      const cat = entry.categories.find((c) => c.name === dto.category);
      if (!cat)
        throw new InvalidInput(
          `unknown category ${JSON.stringify(dto.category)}; this desk has: ${entry.categories.map((c) => c.name).join(', ')}`,
        );
      categoryId = cat.id;
    }
    // Drawn for every verdict, used only for one on a first draw: the item is then due for a second opinion.
    const wantSecondOpinion = this.random() < entry.desk.secondOpinionShare;
    try {
      const result = await this.db.write(async (m) => {
        // One statement: the lease, its item (locked until commit on PostgreSQL), and any verdict already stored under this client id.
        const lock = this.db.lockRows({ of: 'i' });
        const row = await this.db.queryOne<LeaseAndItem>(
          m,
          `SELECT l.desk_id, l.item_id, l.reviewer_id, l.draw, l.prediction, l.closed_at, l.closed_reason, i.state, i.lease_id AS item_lease_id, i.leased_until, i.erased_at,
                  (SELECT v.id FROM verdicts v WHERE v.reviewer_id = $2 AND v.client_id = $3) AS existing_id,
                  (SELECT v.item_id FROM verdicts v WHERE v.reviewer_id = $2 AND v.client_id = $3) AS existing_item,
                  so.state AS so_state, so.lease_id AS so_lease_id, so.leased_until AS so_leased_until
           FROM leases l JOIN items i ON i.id = l.item_id LEFT JOIN second_opinions so ON so.item_id = l.item_id WHERE l.id = $1${lock}`,
          [dto.leaseId, reviewer.id, dto.clientId],
        );
        if (row && row.existing_id !== null) {
          if (Number(row.existing_item) !== dto.itemId)
            throw new Conflict(
              `clientId ${JSON.stringify(dto.clientId)} was already used for a verdict on item ${row.existing_item}`,
            );
          return { replayOf: Number(row.existing_id) };
        }
        if (!row) {
          const other = await this.db.queryOne<{ item_id: DbInt }>(
            m,
            'SELECT item_id FROM verdicts WHERE reviewer_id = $1 AND client_id = $2',
            [reviewer.id, dto.clientId],
          );
          if (other)
            throw new Conflict(
              `clientId ${JSON.stringify(dto.clientId)} was already used for a verdict on item ${other.item_id}`,
            );
          throw new NotFound(`no lease ${dto.leaseId}`);
        }
        if (Number(row.reviewer_id) !== reviewer.id) throw new NotAllowed('this lease belongs to another reviewer');
        if (Number(row.desk_id) !== deskId || Number(row.item_id) !== dto.itemId)
          throw new InvalidInput(
            `lease ${dto.leaseId} is for item ${row.item_id} of desk ${row.desk_id}, not item ${dto.itemId} of desk ${deskId}`,
          );
        // Erased while the reviewer held it: the item keeps no text to have a verdict about.
        if (row.erased_at !== null)
          throw new Conflict(
            `item ${dto.itemId} was erased while you held it (erasure on request or retention); your verdict was not recorded`,
          );
        // The reviewer gave the item back: the item may be anyone's now, and this lease no longer covers a verdict.
        if (row.closed_reason === 'returned')
          throw new Conflict(
            `lease ${dto.leaseId} was handed back; your verdict was not recorded (ask for the item again)`,
          );
        const now = new Date();
        const heldByOther =
          row.state === 'leased' &&
          row.item_lease_id !== dto.leaseId &&
          this.db.parseTime(row.leased_until)!.getTime() > now.getTime();
        const secondOpinion = row.draw === 'second-opinion';
        const decided = row.state === 'decided' && !secondOpinion;
        // A second opinion is taken once: refuse a late one when another reviewer took over the item and gave it.
        const opinionTaken =
          secondOpinion &&
          (row.so_state !== 'leased' || row.so_lease_id !== dto.leaseId) &&
          row.so_state !== 'due' &&
          !(row.so_state === 'leased' && this.db.parseTime(row.so_leased_until)!.getTime() <= now.getTime());
        if (heldByOther || decided || opinionTaken) {
          // On PostgreSQL the statement above may have waited for the item's lock while a request with the same
          // client id committed; its snapshot predates that verdict, so look again before refusing.
          const mine = await this.db.queryOne<{ id: DbInt; item_id: DbInt }>(
            m,
            'SELECT id, item_id FROM verdicts WHERE reviewer_id = $1 AND client_id = $2',
            [reviewer.id, dto.clientId],
          );
          if (mine && Number(mine.item_id) === dto.itemId) return { replayOf: Number(mine.id) };
          throw new Conflict(
            heldByOther || (opinionTaken && row.so_state === 'leased')
              ? 'your lease on this item expired and another reviewer holds it now; your verdict was not recorded'
              : 'your lease on this item expired and another reviewer decided it meanwhile; your verdict was not recorded',
          );
        }
        const prediction = row.prediction ? (JSON.parse(row.prediction) as ShownPrediction) : null;
        const view: Omit<VerdictView, 'id'> = {
          deskId,
          itemId: dto.itemId,
          reviewer: reviewer.name,
          category: dto.category ?? null,
          abstain: dto.abstain === true,
          clientId: dto.clientId,
          modelVersion: prediction?.modelVersion ?? null,
          shownSet: prediction?.set ?? null,
          shownCall: prediction?.call ?? null,
          elapsedMs: dto.elapsedMs ?? null,
          note: dto.note ?? null,
          simulated,
          createdAt: now,
          undoneAt: null,
        };
        const [ins] = await this.db.query<{ id: DbInt }>(
          m,
          `INSERT INTO verdicts (desk_id, item_id, reviewer_id, lease_id, client_id, category_id, abstain, draw, model_version, shown_set, shown_call, shown_probabilities, elapsed_ms, note, simulated, created_at, undone_at)
           VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, NULL) RETURNING id`,
          [
            deskId,
            dto.itemId,
            reviewer.id,
            dto.leaseId,
            dto.clientId,
            categoryId,
            view.abstain,
            row.draw,
            view.modelVersion,
            prediction ? JSON.stringify(prediction.set) : null,
            view.shownCall,
            prediction ? JSON.stringify(prediction.probabilities) : null,
            view.elapsedMs,
            view.note,
            simulated,
            this.db.time(now),
          ],
        );
        const verdictId = Number(ins.id);
        if (secondOpinion) {
          await this.db.query(
            m,
            `UPDATE second_opinions SET state = 'done', lease_id = NULL, leased_until = NULL, verdict_id = $1, done_at = $2 WHERE item_id = $3`,
            [verdictId, this.db.time(now), dto.itemId],
          );
          await this.db.query(m, `UPDATE items SET state = 'decided' WHERE id = $1 AND state = 'open'`, [dto.itemId]);
        } else {
          await this.db.query(
            m,
            `UPDATE items SET state = 'decided', lease_id = NULL, leased_until = NULL WHERE id = $1`,
            [dto.itemId],
          );
          if (wantSecondOpinion) {
            await this.db.query(
              m,
              `INSERT INTO second_opinions (item_id, desk_id, state, created_at) VALUES ($1, $2, 'due', $3) ON CONFLICT (item_id) DO NOTHING`,
              [dto.itemId, deskId, this.db.time(now)],
            );
          }
        }
        if (row.closed_at === null)
          await this.db.query(m, `UPDATE leases SET closed_at = $1, closed_reason = 'verdict' WHERE id = $2`, [
            this.db.time(now),
            dto.leaseId,
          ]);
        await this.audit.record(m, reviewer, {
          action: 'verdict.create',
          entityType: 'verdict',
          entityId: verdictId,
          deskId,
          after: {
            itemId: dto.itemId,
            category: dto.category ?? null,
            abstain: dto.abstain === true,
            clientId: dto.clientId,
            ...(simulated ? { simulated: true } : {}),
          },
        });
        const raised =
          urgentReason === null
            ? null
            : await this.escalations.raise(m, reviewer, {
                deskId,
                itemId: dto.itemId,
                verdictId,
                reason: urgentReason,
                at: now,
              });
        return { created: { id: verdictId, ...view }, raised };
      });
      if (result.replayOf !== undefined) return { verdict: await this.view(result.replayOf), replayed: true };
      this.retrain.nudge(deskId, 'verdict');
      if (result.raised) {
        // The escalation is stored and shows on the overview; only the outside announcement would be missing.
        await this.escalations.announce(result.raised).catch((e: unknown) => {
          this.logger.error(
            `urgent escalation ${result.raised!.escalationId}: not queued for the webhook: ${String(e)}`,
          );
        });
      }
      return { verdict: result.created, replayed: false };
    } catch (e) {
      if (isUniqueViolation(e)) {
        // A concurrent request with the same client id won the race: answer as a replay.
        const again = await this.db.queryOne<{ id: DbInt; item_id: DbInt }>(
          null,
          'SELECT id, item_id FROM verdicts WHERE reviewer_id = $1 AND client_id = $2',
          [reviewer.id, dto.clientId],
        );
        if (again && Number(again.item_id) === dto.itemId)
          return { verdict: await this.view(Number(again.id)), replayed: true };
        throw new Conflict('you have already given a verdict on this item');
      }
      throw e;
    }
  }

  /**
   * Takes back the author's last verdict within the undo window; the item
   * returns to the queue. With `reopen`, the same item is leased again to
   * the same reviewer in the same transaction, under the draw it was served
   * by, so the reviewer can correct the verdict before anyone else is served
   * the item; `lease` is null when it could not be (another reviewer's
   * verdict already decides it).
   */
  async undo(
    reviewer: Principal,
    verdictId: number,
    options: { reopen?: boolean } = {},
  ): Promise<{ verdict: VerdictView; lease: LeaseGrant | null }> {
    // The desk's settings are read before the write transaction, as a lease reads them.
    const found = options.reopen
      ? await this.db.queryOne<{ desk_id: DbInt }>(null, 'SELECT desk_id FROM verdicts WHERE id = $1', [verdictId])
      : undefined;
    const entry = found ? await this.directory.get(Number(found.desk_id)) : null;
    const lease = await this.db.write(async (m) => {
      const v = await m.findOneBy(VerdictEntity, { id: verdictId });
      if (!v) throw new NotFound(`no verdict ${verdictId}`);
      if (v.reviewerId !== reviewer.id) throw new NotAllowed('only the author may undo a verdict');
      if (v.undoneAt) throw new Conflict('this verdict was already undone');
      const windowMs = this.config.undoWindowSeconds * 1000;
      if (Date.now() - v.createdAt.getTime() > windowMs)
        throw new Conflict(`the undo window of ${Math.round(windowMs / 60000)} minutes has passed`);
      const last = await m.findOne(VerdictEntity, {
        where: { reviewerId: reviewer.id },
        order: { createdAt: 'DESC', id: 'DESC' },
      });
      if (!last || last.id !== v.id) throw new Conflict('only your last verdict can be undone');
      // Only the archive account gives such verdicts, and it never signs in; this narrows the draw for the lease below.
      if (v.draw === 'archive') throw new Conflict('an imported archive label cannot be undone');
      const now = new Date();
      await m.update(VerdictEntity, { id: v.id }, { undoneAt: now });
      const [{ n }] = await this.db.query<{ n: DbInt }>(
        m,
        `SELECT COUNT(*) AS n FROM verdicts WHERE item_id = $1 AND undone_at IS NULL`,
        [v.itemId],
      );
      if (Number(n) === 0) {
        // An erased item never goes back to the queue.
        await this.db.query(
          m,
          `UPDATE items SET state = 'open', lease_id = NULL, leased_until = NULL WHERE id = $1 AND erased_at IS NULL`,
          [v.itemId],
        );
        // Back in the open pool: a second opinion nobody has started yet is no longer due.
        await this.db.query(m, `DELETE FROM second_opinions WHERE item_id = $1 AND state = 'due'`, [v.itemId]);
      } else if (v.draw === 'second-opinion') {
        // The opinion taken back is due again, for a reviewer who has not seen the item (unless the item was erased).
        await this.db.query(
          m,
          `UPDATE second_opinions SET state = 'due', verdict_id = NULL, done_at = NULL WHERE item_id = $1 AND verdict_id = $2
             AND NOT EXISTS (SELECT 1 FROM items i WHERE i.id = $1 AND i.erased_at IS NOT NULL)`,
          [v.itemId, v.id],
        );
      }
      await this.audit.record(m, reviewer, {
        action: 'verdict.undo',
        entityType: 'verdict',
        entityId: v.id,
        deskId: v.deskId,
        before: { undoneAt: null },
        after: { undoneAt: now.toISOString() },
      });
      return entry ? this.leases.grantItem(m, reviewer, entry.desk, v.itemId, v.draw) : null;
    });
    const undone = await this.view(verdictId);
    this.retrain.nudge(undone.deskId, 'undo');
    return { verdict: undone, lease };
  }

  /** A reviewer's live verdicts on a desk given at or after `since`. */
  async countMine(reviewer: Principal, deskId: number, since: Date): Promise<number> {
    const row = await this.db.queryOne<{ n: DbInt }>(
      null,
      'SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1 AND reviewer_id = $2 AND created_at >= $3 AND undone_at IS NULL',
      [deskId, reviewer.id, this.db.time(since)],
    );
    return Number(row?.n ?? 0);
  }

  async view(id: number): Promise<VerdictView> {
    const rows = await this.listWhere(`v.id = $1`, [id], 1);
    if (!rows[0]) throw new NotFound(`no verdict ${id}`);
    return rows[0];
  }

  /** Verdicts of a desk, newest first, paged by id. */
  async listForDesk(filter: TrailFilter, page: { before?: number; limit: number }): Promise<VerdictView[]> {
    const [where, params] = this.deskWhere(filter, page);
    return this.listWhere(where, params, page.limit);
  }

  /** The same list for supervisors and auditors, with each verdict's draw and its item's erasure. */
  async listForOversight(filter: TrailFilter, page: { before?: number; limit: number }): Promise<DeskVerdictView[]> {
    const [where, params] = this.deskWhere(filter, page);
    const rows = await this.query(where, params, page.limit, true);
    return rows.map((r) => ({
      ...this.toView(r),
      draw: r.draw!,
      itemErasedAt: this.db.parseTime(r.item_erased_at),
    }));
  }

  private deskWhere(filter: TrailFilter, page: { before?: number }): [string, unknown[]] {
    const params: unknown[] = [filter.deskId];
    let where = `v.desk_id = $1`;
    const and = (sql: string, value: unknown) => {
      params.push(value);
      where += ` AND ${sql}$${params.length}`;
    };
    if (page.before) and('v.id < ', page.before);
    if (filter.reviewerId) and('v.reviewer_id = ', filter.reviewerId);
    if (filter.reviewerIds) {
      // Whole numbers from the database: safe to write into the statement. An empty list matches nothing.
      where += filter.reviewerIds.length ? ` AND v.reviewer_id IN (${filter.reviewerIds.join(', ')})` : ' AND 1 = 0';
    }
    if (filter.abstain) where += ' AND v.category_id IS NULL';
    else if (filter.categoryId) and('v.category_id = ', filter.categoryId);
    if (filter.from) and('v.created_at >= ', this.db.time(filter.from));
    if (filter.to) and('v.created_at < ', this.db.time(filter.to));
    return [where, params];
  }

  private async listWhere(where: string, params: unknown[], limit: number): Promise<VerdictView[]> {
    return (await this.query(where, params, limit, false)).map((r) => this.toView(r));
  }

  private query(where: string, params: unknown[], limit: number, oversight: boolean): Promise<VerdictRow[]> {
    return this.db.query<VerdictRow>(
      null,
      `SELECT v.id, v.desk_id, v.item_id, u.name AS reviewer, c.name AS category, v.abstain, v.client_id, v.model_version, v.shown_set, v.shown_call,
              v.elapsed_ms, v.note, v.simulated, v.created_at, v.undone_at${oversight ? ', v.draw, i.erased_at AS item_erased_at' : ''}
       FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id${oversight ? ' JOIN items i ON i.id = v.item_id' : ''}
       WHERE ${where} ORDER BY v.id DESC LIMIT ${Math.max(1, Math.min(1000, Math.floor(limit)))}`,
      params,
    );
  }

  private toView(r: VerdictRow): VerdictView {
    return {
      id: Number(r.id),
      deskId: Number(r.desk_id),
      itemId: Number(r.item_id),
      reviewer: r.reviewer,
      category: r.category,
      abstain: r.abstain === true || r.abstain === 1,
      clientId: r.client_id,
      modelVersion: r.model_version === null ? null : Number(r.model_version),
      shownSet: r.shown_set ? (JSON.parse(r.shown_set) as string[]) : null,
      shownCall: r.shown_call,
      elapsedMs: r.elapsed_ms === null ? null : Number(r.elapsed_ms),
      note: r.note,
      simulated: r.simulated === true || r.simulated === 1,
      createdAt: this.db.parseTime(r.created_at)!,
      undoneAt: this.db.parseTime(r.undone_at),
    };
  }
}
