import { BadRequestException, ConflictException, ForbiddenException, Inject, Injectable, NotFoundException } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { AuditService } from '#audit';
import type { Principal } from '#auth';
import { CategoryEntity, Database, isUniqueViolation, LeaseEntity, UserEntity, VerdictEntity } from '#database';
import type { CreateVerdictDto } from './verdict.dto.js';

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

interface ItemLock {
  id: number;
  desk_id: number;
  state: string;
  lease_id: string | null;
  leased_until: unknown;
}

/** Receives verdicts: idempotent by client id, never lost, with what was shown at the time. */
@Injectable()
export class VerdictsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Records a verdict; `replayed` is true when the client id was seen before and nothing was written. */
  async submit(reviewer: Principal, deskId: number, dto: CreateVerdictDto): Promise<{ verdict: VerdictView; replayed: boolean }> {
    if ((dto.category === undefined) === (dto.abstain === undefined)) {
      throw new BadRequestException('give exactly one of: category (a category name of the desk), or abstain: true');
    }
    const replay = await this.findReplay(reviewer, dto);
    if (replay) return { verdict: replay, replayed: true };
    try {
      const id = await this.db.write(async (m) => {
        const p = (n: number) => this.db.p(n);
        const lease = await m.findOneBy(LeaseEntity, { id: dto.leaseId });
        if (!lease) throw new NotFoundException(`no lease ${dto.leaseId}`);
        if (lease.reviewerId !== reviewer.id) throw new ForbiddenException('this lease belongs to another reviewer');
        if (lease.deskId !== deskId || lease.itemId !== dto.itemId) throw new BadRequestException(`lease ${dto.leaseId} is for item ${lease.itemId} of desk ${lease.deskId}, not item ${dto.itemId} of desk ${deskId}`);
        let categoryId: number | null = null;
        if (dto.category !== undefined) {
          const cat = await m.findOneBy(CategoryEntity, { deskId, name: dto.category });
          if (!cat) {
            const names = (await m.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } })).map((c) => c.name);
            throw new BadRequestException(`unknown category ${JSON.stringify(dto.category)}; this desk has: ${names.join(', ')}`);
          }
          categoryId = cat.id;
        }
        const lock = this.db.pg ? ' FOR UPDATE' : '';
        const [item] = (await this.db.query(m, `SELECT id, desk_id, state, lease_id, leased_until FROM items WHERE id = ${p(1)}${lock}`, [dto.itemId])) as ItemLock[];
        if (!item) throw new NotFoundException(`no item ${dto.itemId}`);
        // A concurrent request with the same client id may have committed while this one waited for the item.
        const raced = await m.findOneBy(VerdictEntity, { reviewerId: reviewer.id, clientId: dto.clientId });
        if (raced) return -raced.id;
        const now = new Date();
        const heldByOther = item.state === 'leased' && item.lease_id !== lease.id && this.db.parseTime(item.leased_until)!.getTime() > now.getTime();
        if (heldByOther) throw new ConflictException('your lease on this item expired and another reviewer holds it now; your verdict was not recorded');
        if (item.state === 'decided' && lease.draw !== 'second-opinion') throw new ConflictException('your lease on this item expired and another reviewer decided it meanwhile; your verdict was not recorded');
        const prediction = lease.prediction;
        const row: Omit<VerdictEntity, 'id'> = {
          deskId, itemId: item.id, reviewerId: reviewer.id, leaseId: lease.id, clientId: dto.clientId, categoryId, abstain: dto.abstain === true,
          draw: lease.draw, modelVersion: prediction?.modelVersion ?? null, shownSet: prediction?.set ?? null, shownCall: prediction?.call ?? null,
          shownProbabilities: prediction?.probabilities ?? null, elapsedMs: dto.elapsedMs ?? null, note: dto.note ?? null, simulated: false, createdAt: now, undoneAt: null,
        };
        const ins = await m.insert(VerdictEntity, row as never);
        const verdictId = Number(ins.identifiers[0]!.id);
        await this.db.query(m, `UPDATE items SET state = 'decided', lease_id = NULL, leased_until = NULL WHERE id = ${p(1)}`, [item.id]);
        if (!lease.closedAt) await m.update(LeaseEntity, { id: lease.id }, { closedAt: now, closedReason: 'verdict' });
        await this.audit.record(m, reviewer, {
          action: 'verdict.create', entityType: 'verdict', entityId: verdictId, deskId,
          after: { itemId: item.id, category: dto.category ?? null, abstain: dto.abstain === true, clientId: dto.clientId },
        });
        return verdictId;
      });
      return id < 0 ? { verdict: await this.view(-id), replayed: true } : { verdict: await this.view(id), replayed: false };
    } catch (e) {
      if (isUniqueViolation(e)) {
        // A concurrent replay of the same client id won the race: answer as a replay.
        const again = await this.findReplay(reviewer, dto);
        if (again) return { verdict: again, replayed: true };
        throw new ConflictException('you have already given a verdict on this item');
      }
      throw e;
    }
  }

  private async findReplay(reviewer: Principal, dto: CreateVerdictDto): Promise<VerdictView | null> {
    const existing = await this.db.manager.findOneBy(VerdictEntity, { reviewerId: reviewer.id, clientId: dto.clientId });
    if (!existing) return null;
    if (existing.itemId !== dto.itemId) throw new ConflictException(`clientId ${JSON.stringify(dto.clientId)} was already used for a verdict on item ${existing.itemId}`);
    return this.view(existing.id);
  }

  /** Takes back the author's last verdict within the undo window; the item returns to the queue. */
  async undo(reviewer: Principal, verdictId: number): Promise<VerdictView> {
    await this.db.write(async (m) => {
      const v = await m.findOneBy(VerdictEntity, { id: verdictId });
      if (!v) throw new NotFoundException(`no verdict ${verdictId}`);
      if (v.reviewerId !== reviewer.id) throw new ForbiddenException('only the author may undo a verdict');
      if (v.undoneAt) throw new ConflictException('this verdict was already undone');
      const windowMs = this.config.undoWindowSeconds * 1000;
      if (Date.now() - v.createdAt.getTime() > windowMs) throw new ConflictException(`the undo window of ${Math.round(windowMs / 60000)} minutes has passed`);
      const last = await m.findOne(VerdictEntity, { where: { reviewerId: reviewer.id }, order: { createdAt: 'DESC', id: 'DESC' } });
      if (!last || last.id !== v.id) throw new ConflictException('only your last verdict can be undone');
      const now = new Date();
      await m.update(VerdictEntity, { id: v.id }, { undoneAt: now });
      const p = (n: number) => this.db.p(n);
      const [{ n }] = (await this.db.query(m, `SELECT COUNT(*) AS n FROM verdicts WHERE item_id = ${p(1)} AND undone_at IS NULL`, [v.itemId])) as Array<{ n: number | string }>;
      if (Number(n) === 0) await this.db.query(m, `UPDATE items SET state = 'open', lease_id = NULL, leased_until = NULL WHERE id = $1`, [v.itemId]);
      await this.audit.record(m, reviewer, { action: 'verdict.undo', entityType: 'verdict', entityId: v.id, deskId: v.deskId, before: { undoneAt: null }, after: { undoneAt: now.toISOString() } });
    });
    return this.view(verdictId);
  }

  async view(id: number): Promise<VerdictView> {
    const p = (n: number) => this.db.p(n);
    const rows = await this.listWhere(`v.id = ${p(1)}`, [id], 1);
    if (!rows[0]) throw new NotFoundException(`no verdict ${id}`);
    return rows[0];
  }

  /** Verdicts of a desk, newest first, paged by id. */
  async listForDesk(deskId: number, opts: { before?: number; limit: number; reviewerId?: number }): Promise<VerdictView[]> {
    const p = (n: number) => this.db.p(n);
    const params: unknown[] = [deskId];
    let where = `v.desk_id = ${p(1)}`;
    if (opts.before) { params.push(opts.before); where += ` AND v.id < ${p(params.length)}`; }
    if (opts.reviewerId) { params.push(opts.reviewerId); where += ` AND v.reviewer_id = ${p(params.length)}`; }
    return this.listWhere(where, params, opts.limit);
  }

  private async listWhere(where: string, params: unknown[], limit: number): Promise<VerdictView[]> {
    const rows: Array<Record<string, unknown>> = await this.db.query(null, 
      `SELECT v.id, v.desk_id, v.item_id, u.name AS reviewer, c.name AS category, v.abstain, v.client_id, v.model_version, v.shown_set, v.shown_call,
              v.elapsed_ms, v.note, v.simulated, v.created_at, v.undone_at
       FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id
       WHERE ${where} ORDER BY v.id DESC LIMIT ${Math.max(1, Math.min(1000, Math.floor(limit)))}`,
      params,
    );
    return rows.map((r) => ({
      id: Number(r.id), deskId: Number(r.desk_id), itemId: Number(r.item_id), reviewer: String(r.reviewer), category: (r.category as string | null) ?? null,
      abstain: r.abstain === true || r.abstain === 1, clientId: String(r.client_id), modelVersion: r.model_version === null ? null : Number(r.model_version),
      shownSet: r.shown_set ? (JSON.parse(String(r.shown_set)) as string[]) : null, shownCall: (r.shown_call as VerdictView['shownCall']) ?? null,
      elapsedMs: r.elapsed_ms === null ? null : Number(r.elapsed_ms), note: (r.note as string | null) ?? null, simulated: r.simulated === true || r.simulated === 1,
      createdAt: this.db.parseTime(r.created_at)!, undoneAt: this.db.parseTime(r.undone_at),
    }));
  }

  /** Whether a user exists (for filters). */
  async userId(name: string): Promise<number | null> {
    return (await this.db.manager.findOneBy(UserEntity, { name }))?.id ?? null;
  }
}
