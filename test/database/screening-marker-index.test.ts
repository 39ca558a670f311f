/**
 * The screening cache's change marker, read at every `GET /screening` and `GET /prevalence`, counts a desk's items
 * from `ix_items_marker` alone: a column read by the statement and missing from the index would send it back to the
 * rows of the whole pool.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { openDatabase } from '#database';
import { CHANGE_MARKER_SQL } from '../../libs/models/src/screening/screening.repository.js';
import { createTestDatabase, DATABASE_KINDS, type TestDatabase } from '../support/databases.js';

interface PlanNode {
  'Node Type': string;
  'Relation Name'?: string;
  'Index Name'?: string;
  Plans?: PlanNode[];
}

describe.each(DATABASE_KINDS)('the change marker on %s', (kind) => {
  let tdb: TestDatabase;
  let ds: DataSource;

  beforeAll(async () => {
    tdb = await createTestDatabase(kind);
    ds = await openDatabase(tdb.config);
  });
  afterAll(async () => {
    await ds.destroy();
    await tdb.drop();
  });

  it('counts the items from ix_items_marker alone', async () => {
    if (kind === 'postgres') {
      // Whatever the table's size, the question is whether the index covers the statement.
      await ds.query('SET enable_seqscan = off');
      const [{ 'QUERY PLAN': plan }] = await ds.query<Array<{ 'QUERY PLAN': unknown }>>(
        `EXPLAIN (FORMAT JSON) ${CHANGE_MARKER_SQL}`,
        [1, 1],
      );
      const scans: Array<{ type: string; index?: string }> = [];
      const walk = (node: PlanNode): void => {
        if (node['Relation Name'] === 'items') scans.push({ type: node['Node Type'], index: node['Index Name'] });
        node.Plans?.forEach(walk);
      };
      walk((plan as Array<{ Plan: PlanNode }>)[0].Plan);
      expect(scans).toEqual([{ type: 'Index Only Scan', index: 'ix_items_marker' }]);
    } else {
      const plan = await ds.query<Array<{ detail: string }>>(
        `EXPLAIN QUERY PLAN ${CHANGE_MARKER_SQL.replace(/\$[12]/g, '?')}`,
        [1, 1, 1, 1],
      );
      const items = plan.map((r) => r.detail).filter((d) => /\bitems\b/.test(d));
      expect(items).toEqual([expect.stringMatching(/USING COVERING INDEX ix_items_marker/)]);
    }
  });
});
