import type { Database, DbInt } from '#database';
import type { Stack } from './stack.js';
import { eventually } from './stack.js';

/** One verdict to insert directly (tests that need many, or a shape the API would refuse). */
export interface VerdictRow {
  itemId: number;
  reviewerId: number;
  categoryId: number | null;
  draw?: string;
  undone?: boolean;
  createdAt?: Date;
  note?: string | null;
  modelVersion?: number | null;
  shownSet?: string[] | null;
  shownCall?: 'sure' | 'ambiguous' | 'unfamiliar' | null;
}

/** Inserts verdicts with multi-row INSERTs, bypassing the API (and the retrain nudge). */
export async function insertVerdicts(db: Database, deskId: number, rows: VerdictRow[], batch = 500): Promise<void> {
  let n = 0;
  for (let i = 0; i < rows.length; i += batch) {
    const slice = rows.slice(i, i + batch);
    const params: unknown[] = [];
    const tuples = slice.map((r) => {
      const at = r.createdAt ?? new Date();
      const values = [
        deskId,
        r.itemId,
        r.reviewerId,
        `bulk-${Date.now()}-${i}-${n++}`,
        r.categoryId,
        r.categoryId === null,
        r.draw ?? 'uncertainty',
        r.modelVersion ?? null,
        r.shownSet ? JSON.stringify(r.shownSet) : null,
        r.shownCall ?? null,
        1000,
        r.note ?? null,
        false,
        db.time(at),
        r.undone ? db.time(at) : null,
      ];
      const start = params.length;
      params.push(...values);
      return `(${values.map((_, j) => `$${start + j + 1}`).join(', ')})`;
    });
    await db.write((m) =>
      db.query(
        m,
        `INSERT INTO verdicts (desk_id, item_id, reviewer_id, client_id, category_id, abstain, draw, model_version, shown_set, shown_call, elapsed_ms, note, simulated, created_at, undone_at)
       VALUES ${tuples.join(', ')}`,
        params,
      ),
    );
  }
}

/** A desk with `count` imported items; returns its id, item ids (ascending) and category ids by name. */
export async function deskWithItems(
  s: Stack,
  supervisor: string,
  categories: string[],
  count: number,
  name = 'agreement desk',
): Promise<{ deskId: number; itemIds: number[]; categoryIds: Record<string, number> }> {
  const d = await s.call(supervisor, 'POST', '/api/desks', { name, categories });
  if (d.status !== 201) throw new Error(`desk: ${d.status} ${JSON.stringify(d.body)}`);
  const deskId = d.body.id as number;
  await s.enrol(deskId);
  const body = Array.from({ length: count }, (_, i) =>
    JSON.stringify({ text: `Mossbank Commons post number ${i} about the allotment fence`, external_id: `mb-${i}` }),
  ).join('\n');
  const imp = await s.call(supervisor, 'POST', `/api/desks/${deskId}/imports`, body, {
    'content-type': 'application/x-ndjson',
  });
  await eventually(
    async () =>
      (await s.call(supervisor, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
    60_000,
    'import',
  );
  const items = await s.db.query<{ id: DbInt }>(null, 'SELECT id FROM items WHERE desk_id = $1 ORDER BY id', [deskId]);
  const cats = await s.db.query<{ id: DbInt; name: string }>(
    null,
    'SELECT id, name FROM categories WHERE desk_id = $1',
    [deskId],
  );
  return {
    deskId,
    itemIds: items.map((r) => Number(r.id)),
    categoryIds: Object.fromEntries(cats.map((c) => [c.name, Number(c.id)])),
  };
}

/** The id of a user by name. */
export async function userId(db: Database, name: string): Promise<number> {
  const u = await db.queryOne<{ id: DbInt }>(null, 'SELECT id FROM users WHERE name = $1', [name]);
  if (!u) throw new Error(`no user ${name}`);
  return Number(u.id);
}
