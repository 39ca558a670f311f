import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MIGRATIONS, openDatabase } from '#database';
import type { DataSource } from 'typeorm';
import { createTestDatabase, DATABASE_KINDS, type TestDatabase } from '../support/databases.js';

const now = '2026-01-01 00:00:00.000';

describe.each(DATABASE_KINDS)('migrations on %s', (kind) => {
  let tdb: TestDatabase;
  let ds: DataSource;
  const q = (sql: string, params: unknown[] = []) => {
    // Same SQL on both databases: translate ? placeholders for PostgreSQL.
    let i = 0;
    return ds.query(kind === 'postgres' ? sql.replace(/\?/g, () => `$${++i}`) : sql, params);
  };

  beforeAll(async () => {
    tdb = await createTestDatabase(kind);
    ds = await openDatabase(tdb.config);
    await q(`INSERT INTO users (name, role, disabled, created_at) VALUES ('sam', 'supervisor', false, ?)`, [now]);
    await q(`INSERT INTO users (name, role, disabled, created_at) VALUES ('rae', 'reviewer', false, ?)`, [now]);
    for (const name of ['alpha', 'beta']) {
      await q(
        `INSERT INTO desks (name, seed_terms, coverage_target, calibration, random_share, lease_seconds, created_by, created_at, updated_at) VALUES (?, '{}', 0.9, 'per-category', 0.2, 600, 1, ?, ?)`,
        [name, now, now],
      );
      await q(
        `INSERT INTO categories (desk_id, name, position, created_at) VALUES ((SELECT id FROM desks WHERE name = ?), 'ok', 1, ?)`,
        [name, now],
      );
    }
    await q(
      `INSERT INTO items (desk_id, text, normalized_text, normalized_hash, meta, imported_at, state, seed_hits, priority, rand_key) VALUES (1, 'hello', 'hello', 'h1', '{}', ?, 'open', 0, 0, 0.5)`,
      [now],
    );
  });
  afterAll(async () => {
    await (ds as DataSource | undefined)?.destroy();
    await (tdb as TestDatabase | undefined)?.drop();
  });

  const verdict = (categoryId: number | null, abstain: boolean, clientId: string, reviewer = 2) =>
    q(
      `INSERT INTO verdicts (desk_id, item_id, reviewer_id, client_id, category_id, abstain, draw, simulated, created_at) VALUES (1, 1, ?, ?, ?, ?, 'random', false, ?)`,
      [reviewer, clientId, categoryId, abstain, now],
    );

  it('refuses a role outside the list', async () => {
    await expect(
      q(`INSERT INTO users (name, role, disabled, created_at) VALUES ('x', 'owner', false, ?)`, [now]),
    ).rejects.toThrow(/ck_users_role|CHECK/i);
  });

  it('refuses a coverage target outside 0.5..0.999', async () => {
    await expect(
      q(
        `INSERT INTO desks (name, seed_terms, coverage_target, calibration, random_share, lease_seconds, created_by, created_at, updated_at) VALUES ('g', '{}', 1.0, 'marginal', 0.2, 600, 1, ?, ?)`,
        [now, now],
      ),
    ).rejects.toThrow();
  });

  it('refuses a confidence outside 0.5..0.999', async () => {
    await expect(q(`UPDATE desks SET confidence = 0.2 WHERE name = 'alpha'`)).rejects.toThrow(
      /ck_desks_confidence|CHECK/i,
    );
    await q(`UPDATE desks SET confidence = 0.9 WHERE name = 'alpha'`);
    await q(`UPDATE desks SET confidence = NULL WHERE name = 'alpha'`);
  });

  it('refuses a verdict whose category belongs to another desk', async () => {
    // category 2 belongs to desk 2, the item to desk 1.
    await expect(verdict(2, false, 'c-foreign')).rejects.toThrow(/foreign key|FOREIGN KEY/i);
  });

  it('refuses a verdict with both or neither of category and abstain', async () => {
    await expect(verdict(1, true, 'c-both')).rejects.toThrow(/ck_verdicts_decision|CHECK/i);
    await expect(verdict(null, false, 'c-neither')).rejects.toThrow(/ck_verdicts_decision|CHECK/i);
  });

  it('allows one live verdict per item and reviewer, and one use of a client id', async () => {
    await verdict(1, false, 'c-1');
    await expect(verdict(null, true, 'c-2')).rejects.toThrow(/unique|UNIQUE/i);
    await expect(verdict(1, false, 'c-1')).rejects.toThrow(/unique|UNIQUE/i);
    await q(`UPDATE verdicts SET undone_at = ? WHERE client_id = 'c-1'`, [now]);
    await verdict(null, true, 'c-3');
  });

  it('refuses a second-opinion share outside 0..1 and defaults it to 0.1', async () => {
    const [row] = await q(`SELECT second_opinion_share AS share FROM desks WHERE name = 'alpha'`);
    expect(Number(row.share)).toBe(0.1);
    await expect(q(`UPDATE desks SET second_opinion_share = 1.5 WHERE name = 'alpha'`)).rejects.toThrow(
      /ck_desks_second_opinion|CHECK/i,
    );
    await expect(q(`UPDATE desks SET second_opinion_share = -0.1 WHERE name = 'alpha'`)).rejects.toThrow(
      /ck_desks_second_opinion|CHECK/i,
    );
  });

  it('takes the screen draw, refuses an unknown one, and keeps the review-lane share within 0..1', async () => {
    const draw = (kind: string, clientId: string) =>
      q(
        `INSERT INTO verdicts (desk_id, item_id, reviewer_id, client_id, category_id, abstain, draw, simulated, created_at, undone_at) VALUES (1, 1, 1, ?, NULL, true, ?, false, ?, ?)`,
        [clientId, kind, now, now],
      );
    await draw('screen', 'lane-1');
    await expect(draw('hunch', 'lane-2')).rejects.toThrow(/ck_verdicts_draw|CHECK/i);
    const [row] = await q(`SELECT screen_share AS share FROM desks WHERE name = 'alpha'`);
    expect(Number(row.share)).toBe(0.5);
    await expect(q(`UPDATE desks SET screen_share = 1.5 WHERE name = 'alpha'`)).rejects.toThrow(
      /ck_desks_screen_share|CHECK/i,
    );
  });

  it('refuses an empty settlement reason and a settled category of another desk', async () => {
    await expect(
      q(
        `INSERT INTO settlements (desk_id, item_id, category_id, reason, settled_by, created_at) VALUES (1, 1, 1, '', 1, ?)`,
        [now],
      ),
    ).rejects.toThrow(/ck_settlements_reason|CHECK/i);
    await expect(
      q(
        `INSERT INTO settlements (desk_id, item_id, category_id, reason, settled_by, created_at) VALUES (1, 1, 2, 'why', 1, ?)`,
        [now],
      ),
    ).rejects.toThrow(/foreign key|FOREIGN KEY/i);
    await q(
      `INSERT INTO settlements (desk_id, item_id, category_id, reason, settled_by, created_at) VALUES (1, 1, 1, 'why', 1, ?)`,
      [now],
    );
  });

  it("keeps a second opinion's state and lease consistent", async () => {
    await expect(
      q(`INSERT INTO second_opinions (item_id, desk_id, state, created_at) VALUES (1, 1, 'leased', ?)`, [now]),
    ).rejects.toThrow(/ck_second_opinions_lease|CHECK/i);
    await expect(
      q(`INSERT INTO second_opinions (item_id, desk_id, state, created_at) VALUES (1, 1, 'waiting', ?)`, [now]),
    ).rejects.toThrow(/ck_second_opinions_state|CHECK/i);
    await expect(
      q(`INSERT INTO second_opinions (item_id, desk_id, state, created_at) VALUES (1, 1, 'done', ?)`, [now]),
    ).rejects.toThrow(/ck_second_opinions_done|CHECK/i);
    await q(`INSERT INTO second_opinions (item_id, desk_id, state, created_at) VALUES (1, 1, 'due', ?)`, [now]);
  });

  it('keeps the audit trail append-only', async () => {
    await q(
      `INSERT INTO audit_events (at, actor_name, action, entity_type, entity_id) VALUES (?, 'sam', 'desk.create', 'desk', '1')`,
      [now],
    );
    await expect(q(`UPDATE audit_events SET action = 'x'`)).rejects.toThrow(/append-only/);
    await expect(q(`DELETE FROM audit_events`)).rejects.toThrow(/append-only/);
  });

  it('keeps a report tied to an existing version, and a ready report complete', async () => {
    await expect(
      q(`INSERT INTO model_reports (desk_id, version, state, started_at) VALUES (1, 1, 'writing', ?)`, [now]),
    ).rejects.toThrow(/foreign key|FOREIGN KEY/i);
    await q(
      `INSERT INTO model_versions (desk_id, version, state, job_key, verdict_watermark, training, calibration, timings, created_at, published_at) VALUES (1, 1, 'published', 'k-1', 0, '{}', '{}', '{}', ?, ?)`,
      [now, now],
    );
    await q(`INSERT INTO model_reports (desk_id, version, state, started_at) VALUES (1, 1, 'writing', ?)`, [now]);
    await expect(q(`UPDATE model_reports SET state = 'ready'`)).rejects.toThrow(/ck_model_reports_ready|CHECK/i);
    await expect(q(`UPDATE model_reports SET state = 'failed'`)).rejects.toThrow(/ck_model_reports_failure|CHECK/i);
    await expect(
      q(`INSERT INTO model_reports (desk_id, version, state, started_at) VALUES (1, 1, 'writing', ?)`, [now]),
    ).rejects.toThrow(/unique|UNIQUE/i);
    await q(
      `UPDATE model_reports SET state = 'ready', figures = '{}', html = '<p>', figures_sha256 = ?, generated_at = ?`,
      ['0'.repeat(64), now],
    );
  });

  it('makes every account but the admins a member of every existing desk, with its role', async () => {
    await q(`INSERT INTO users (name, role, disabled, created_at) VALUES ('ada', 'admin', false, ?)`, [now]);
    await q(`INSERT INTO users (name, role, disabled, created_at) VALUES ('oz', 'auditor', false, ?)`, [now]);
    // Back to the schema before desk memberships, then forward again, with users and desks in place.
    const since = MIGRATIONS.findIndex((m) => m.name === 'DeskMembers1766210000000');
    expect(since).toBeGreaterThan(0);
    for (let i = since; i < MIGRATIONS.length; i++) await ds.undoLastMigration({ transaction: 'each' });
    await ds.runMigrations({ transaction: 'each' });
    const rows: Array<{ desk: string; name: string; role: string }> = await q(
      `SELECT d.name AS desk, u.name, m.role FROM desk_members m JOIN desks d ON d.id = m.desk_id JOIN users u ON u.id = m.user_id ORDER BY d.name, u.name`,
    );
    const users: Array<{ name: string; role: string }> = await q(`SELECT name, role FROM users WHERE role <> 'admin'`);
    expect(users.length).toBeGreaterThanOrEqual(3);
    expect(rows.map((r) => `${r.desk}:${r.name}:${r.role}`)).toEqual(
      ['alpha', 'beta'].flatMap((d) => users.map((u) => `${d}:${u.name}:${u.role}`).sort((a, b) => a.localeCompare(b))),
    );
    expect(rows.some((r) => r.name === 'ada')).toBe(false);
    await expect(
      q(
        `INSERT INTO desk_members (desk_id, user_id, role, created_at, updated_at) VALUES (1, (SELECT id FROM users WHERE name = 'ada'), 'admin', ?, ?)`,
        [now, now],
      ),
    ).rejects.toThrow(/ck_desk_members_role|CHECK/i);
    await expect(
      q(`INSERT INTO desk_members (desk_id, user_id, role, created_at, updated_at) VALUES (1, 999, 'reviewer', ?, ?)`, [
        now,
        now,
      ]),
    ).rejects.toThrow(/foreign key|FOREIGN KEY/i);
  });

  it('reverts every migration with down()', async () => {
    for (let i = 0; i < MIGRATIONS.length; i++) await ds.undoLastMigration({ transaction: 'each' });
    const tables: Array<{ name: string }> = await q(
      kind === 'postgres'
        ? `SELECT table_name AS name FROM information_schema.tables WHERE table_schema = 'public' AND table_name <> 'migrations'`
        : `SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT IN ('migrations', 'sqlite_sequence')`,
    );
    expect(tables).toEqual([]);
    await ds.runMigrations();
  });
});
