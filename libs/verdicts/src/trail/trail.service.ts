import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskDirectory, UserEntity, type DbInt } from '#database';
import { parseIsoDateTime } from '#imports';
import type { TrailRow } from './trail-format.js';
import { InvalidInput, NotFound } from '#errors';

/** Filters of the decision trail, as given in the query string. */
export interface TrailQuery {
  reviewer?: string;
  /** A part of a reviewer's name, any case: every reviewer of the desk whose name holds it. */
  reviewerMatch?: string;
  category?: string;
  from?: string;
  to?: string;
}

/**
 * The filters from a query string. Repeated query keys arrive as arrays: refuse them rather than guess. The decision
 * trail and the verdict list read their filters through this and `TrailService.filter`, so they refuse the same things.
 */
export function trailQuery(q: Record<string, unknown>): TrailQuery {
  const s = (key: string) => {
    const v = q[key];
    if (v !== undefined && typeof v !== 'string') throw new InvalidInput(`${key}: give it at most once`);
    return v;
  };
  return {
    reviewer: s('reviewer'),
    reviewerMatch: s('reviewerMatch'),
    category: s('category'),
    from: s('from'),
    to: s('to'),
  };
}

/** Checked filters: a reviewer that does not exist matches nothing. */
export interface TrailFilter {
  deskId: number;
  reviewerId?: number | null;
  /** The reviewers whose names hold `reviewerMatch`; empty matches nothing. */
  reviewerIds?: number[];
  categoryId?: number | null;
  abstain?: boolean;
  from?: Date;
  to?: Date;
}

/**
 * Verdicts read per query: each page is a keyset query on the verdict id, so memory stays flat however long the
 * trail. Small pages keep each page's rows short-lived enough to die young in the garbage collector: measured on
 * 200 000 verdicts (SQLite), pages of 1 000 grew the server's resident memory by about 86 MB, pages of 250 by 4 MB,
 * at the same speed. On PostgreSQL the growth (77–110 MB at 250 or 100 a page under V8's default heap limit) was the
 * garbage collector letting the heap grow while rows stream fast, not rows kept: with the API's heap limit
 * (API_HEAP_MB, 512 by default) it measured 24–25 MB.
 */
export const TRAIL_PAGE_SIZE = 250;

/**
 * The decision trail of a desk: every verdict, undone ones included, with
 * what was shown and the item's settled label, read page by page in verdict
 * id order so the export streams.
 */
@Injectable()
export class TrailService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
  ) {}

  /** Checks the filters (400 on bad ones, 404 for an unknown desk) before anything is streamed. */
  async filter(deskId: number, q: TrailQuery): Promise<TrailFilter> {
    const entry = await this.directory.get(deskId);
    if (!entry) throw new NotFound(`no desk ${deskId}`);
    const f: TrailFilter = { deskId };
    const problems: string[] = [];
    for (const key of ['from', 'to'] as const) {
      const v = q[key];
      if (v === undefined || v === '') continue;
      const d = parseIsoDateTime(v);
      if (!d)
        problems.push(
          `${key}: expected an ISO 8601 date or date-time (e.g. 2026-01-31 or 2026-01-31T12:00:00Z), got ${JSON.stringify(v)}`,
        );
      else f[key] = d;
    }
    if (f.from && f.to && f.from.getTime() > f.to.getTime()) problems.push('from: must not be after to');
    if (q.category !== undefined && q.category !== '') {
      if (q.category === 'abstain') f.abstain = true;
      else {
        const cat = entry.categories.find((c) => c.name === q.category);
        if (!cat)
          problems.push(
            `category: unknown ${JSON.stringify(q.category)}; this desk has: ${entry.categories.map((c) => c.name).join(', ')} (or abstain)`,
          );
        else f.categoryId = cat.id;
      }
    }
    if (q.reviewerMatch !== undefined && q.reviewerMatch.length > 100)
      problems.push(`reviewerMatch: at most 100 characters, got ${q.reviewerMatch.length}`);
    if (problems.length) throw new InvalidInput(problems);
    if (q.reviewerMatch !== undefined && q.reviewerMatch.trim() !== '') {
      // Matched here rather than in SQL: LOWER() folds only ASCII on SQLite, and a desk has few reviewers.
      const part = q.reviewerMatch.trim().toLocaleLowerCase();
      const names = await this.db.query<{ id: DbInt; name: string }>(
        null,
        'SELECT u.id, u.name FROM users u WHERE u.id IN (SELECT DISTINCT v.reviewer_id FROM verdicts v WHERE v.desk_id = $1)',
        [deskId],
      );
      f.reviewerIds = names.filter((u) => u.name.toLocaleLowerCase().includes(part)).map((u) => Number(u.id));
    }
    if (q.reviewer !== undefined && q.reviewer !== '')
      f.reviewerId = (await this.db.manager.findOneBy(UserEntity, { name: q.reviewer }))?.id ?? null;
    return f;
  }

  /** The trail's rows in verdict id order; `from` inclusive, `to` exclusive. */
  async *rows(f: TrailFilter, pageSize = TRAIL_PAGE_SIZE): AsyncGenerator<TrailRow[]> {
    if (f.reviewerId === null) return;
    const params: unknown[] = [f.deskId, 0];
    let where = 'v.desk_id = $1 AND v.id > $2';
    const add = (sql: string, value: unknown) => {
      params.push(value);
      where += ` AND ${sql.replace('?', `$${params.length}`)}`;
    };
    if (f.reviewerId !== undefined) add('v.reviewer_id = ?', f.reviewerId);
    if (f.reviewerIds) {
      if (f.reviewerIds.length === 0) return;
      // Whole numbers from the database: safe to write into the statement.
      where += ` AND v.reviewer_id IN (${f.reviewerIds.join(', ')})`;
    }
    if (f.categoryId !== undefined && f.categoryId !== null) add('v.category_id = ?', f.categoryId);
    if (f.abstain) add('v.abstain = ?', true);
    if (f.from) add('v.created_at >= ?', this.db.time(f.from));
    if (f.to) add('v.created_at < ?', this.db.time(f.to));
    // The page is chosen in a subquery first and only its rows are joined: a planner without statistics (right after a
    // bulk load) would otherwise join every remaining verdict of the desk before sorting and cutting the page.
    for (;;) {
      const page = await this.db.query(
        null,
        `SELECT v.id, v.item_id, i.external_id, i.erased_at AS item_erased_at, u.name AS reviewer, v.created_at, c.name AS category, v.abstain, v.undone_at, v.draw, v.model_version,
                v.shown_set, v.shown_call, v.elapsed_ms, v.note, v.simulated, sc.name AS settled_category, su.name AS settled_by, s.created_at AS settled_at
         FROM (SELECT v.id, v.item_id, v.reviewer_id, v.category_id, v.created_at, v.abstain, v.undone_at, v.draw, v.model_version, v.shown_set, v.shown_call,
                      v.elapsed_ms, v.note, v.simulated
               FROM verdicts v WHERE ${where} ORDER BY v.id LIMIT ${pageSize}) v
         JOIN users u ON u.id = v.reviewer_id
         JOIN items i ON i.id = v.item_id
         LEFT JOIN categories c ON c.id = v.category_id
         LEFT JOIN settlements s ON s.id = (SELECT MAX(s2.id) FROM settlements s2 WHERE s2.item_id = v.item_id)
         LEFT JOIN categories sc ON sc.id = s.category_id
         LEFT JOIN users su ON su.id = s.settled_by
         ORDER BY v.id`,
        params,
      );
      if (page.length === 0) return;
      yield page.map((r) => this.toRow(r));
      if (page.length < pageSize) return;
      params[1] = Number(page[page.length - 1].id);
    }
  }

  private toRow(r: Record<string, unknown>): TrailRow {
    const iso = (v: unknown) => this.db.parseTime(v)?.toISOString() ?? null;
    const bool = (v: unknown) => v === true || v === 1;
    return {
      verdictId: Number(r.id),
      itemId: Number(r.item_id),
      externalId: (r.external_id as string | null) ?? null,
      reviewer: String(r.reviewer),
      createdAt: iso(r.created_at)!,
      category: (r.category as string | null) ?? null,
      abstain: bool(r.abstain),
      undone: r.undone_at !== null,
      undoneAt: iso(r.undone_at),
      draw: String(r.draw),
      modelVersion: r.model_version === null ? null : Number(r.model_version),
      shownSet: r.shown_set ? (JSON.parse(r.shown_set as string) as string[]) : null,
      shownCall: (r.shown_call as string | null) ?? null,
      elapsedMs: r.elapsed_ms === null ? null : Number(r.elapsed_ms),
      note: (r.note as string | null) ?? null,
      simulated: bool(r.simulated),
      settledCategory: (r.settled_category as string | null) ?? null,
      settledBy: (r.settled_by as string | null) ?? null,
      settledAt: iso(r.settled_at),
      itemErasedAt: iso(r.item_erased_at),
    };
  }
}
