import { createServer, type Server } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { importRows } from '../support/labelled-desk.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

/** A local receiver for the urgent webhook: it fails the first delivery (503), then takes every one. */
async function startReceiver(): Promise<{
  server: Server;
  url: string;
  received: Array<{ status: number; body: unknown }>;
}> {
  const received: Array<{ status: number; body: unknown }> = [];
  const server = createServer((req, res) => {
    let raw = '';
    req.on('data', (c: Buffer) => (raw += c.toString('utf8')));
    req.on('end', () => {
      const status = received.length === 0 ? 503 : 200;
      received.push({ status, body: JSON.parse(raw) as unknown });
      res.writeHead(status).end();
    });
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const { port } = server.address() as { port: number };
  return { server, url: `http://127.0.0.1:${port}/urgent`, received };
}

describe.each(DATABASE_KINDS)('urgent escalations on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let rev: string;
  let aud: string;
  let deskId: number;
  let receiver: Awaited<ReturnType<typeof startReceiver>>;
  const SECRET_TEXT = 'meet me behind the bakery tonight, you will regret it';

  beforeAll(async () => {
    receiver = await startReceiver();
    s = await startStack(kind, { env: { URGENT_WEBHOOK_URL: receiver.url } });
    sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev', 'reviewer');
    aud = await s.user('aud', 'auditor');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'urgent',
      categories: ['threat', 'ok'],
      secondOpinionShare: 0,
    });
    expect(d.status).toBe(201);
    deskId = d.body.id;
    await s.enrol(deskId);
    await importRows(s, sup, deskId, [
      { text: SECRET_TEXT, external_id: 'p1' },
      { text: 'thanks for the bus route update', external_id: 'p2' },
      { text: 'the market moves to the square on saturday', external_id: 'p3' },
    ]);
  }, 120_000);
  afterAll(async () => {
    await (s as Stack | undefined)?.stop();
    await new Promise((r) => (receiver as typeof receiver | undefined)?.server.close(r) ?? r(undefined));
  });

  const lease = async () => {
    const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(l.status).toBe(201);
    return { leaseId: l.body.lease.id as string, itemId: l.body.item.id as number, text: l.body.item.text as string };
  };

  it('refuses an urgent verdict without a short reason, and a reason without urgent, writing nothing', async () => {
    const l = await lease();
    for (const [extra, pattern] of [
      [{ urgent: true }, /urgentReason: required with urgent: true/],
      [{ urgent: true, urgentReason: '   ' }, /urgentReason: required with urgent: true/],
      [{ urgent: true, urgentReason: 'x'.repeat(281) }, /urgentReason: at most 280 characters \(got 281\)/],
      [{ urgentReason: 'names a place' }, /urgentReason: only with urgent: true/],
      [{ urgent: 'yes', urgentReason: 'names a place' }, /urgent must be a boolean value/],
    ] as const) {
      const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
        leaseId: l.leaseId,
        itemId: l.itemId,
        category: 'threat',
        clientId: `bad-${JSON.stringify(extra).length}`,
        ...extra,
      });
      expect(v.status).toBe(400);
      expect(JSON.stringify(v.body.message)).toMatch(pattern);
    }
    const rows = await s.db.query(null, 'SELECT id FROM verdicts WHERE item_id = $1', [l.itemId]);
    expect(rows).toEqual([]);
    expect(await s.db.query(null, 'SELECT id FROM escalations')).toEqual([]);
    expect((await s.call(rev, 'DELETE', `/api/leases/${l.leaseId}`)).status).toBe(204);
  });

  it('shows an urgent item to supervisors and auditors until a supervisor acknowledges it, each step audited', async () => {
    let l = await lease();
    while (l.text !== SECRET_TEXT) {
      const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
        leaseId: l.leaseId,
        itemId: l.itemId,
        category: 'ok',
        clientId: `plain-${l.itemId}`,
      });
      expect(v.status).toBe(201);
      l = await lease();
    }
    const body = {
      leaseId: l.leaseId,
      itemId: l.itemId,
      category: 'threat',
      clientId: 'urgent-1',
      urgent: true,
      urgentReason: '  names a time and a place  ',
    };
    const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, body);
    expect(v.status).toBe(201);
    // A replay (same client id) stores nothing more and announces nothing more.
    expect((await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, body)).status).toBe(200);

    const list = await s.call(sup, 'GET', `/api/desks/${deskId}/urgent`);
    expect(list.status).toBe(200);
    expect(list.body.waiting).toBe(1);
    expect(list.body.items[0]).toMatchObject({
      itemId: l.itemId,
      externalId: 'p1',
      text: SECRET_TEXT,
      reason: 'names a time and a place',
      raisedBy: 'rev',
      category: 'threat',
      erased: false,
    });
    expect((await s.call(aud, 'GET', `/api/desks/${deskId}/urgent`)).status).toBe(200);
    expect((await s.call(rev, 'GET', `/api/desks/${deskId}/urgent`)).status).toBe(403);

    // The webhook: the first delivery fails, the queue tries again; ids only, never the text or the reason.
    await eventually(async () => (receiver.received.length >= 2 ? true : undefined), 30_000, 'a second delivery');
    expect(receiver.received.map((r) => r.status)).toEqual([503, 200]);
    const delivered = receiver.received[1].body as Record<string, unknown>;
    expect(Object.keys(delivered).sort()).toEqual([
      'deskId',
      'escalationId',
      'event',
      'itemId',
      'raisedAt',
      'verdictId',
    ]);
    expect(delivered).toMatchObject({ event: 'urgent', deskId, itemId: l.itemId, verdictId: v.body.verdict.id });
    expect(JSON.stringify(receiver.received)).not.toMatch(/bakery|place/);

    expect((await s.call(aud, 'POST', `/api/items/${l.itemId}/acknowledge`)).status).toBe(403);
    const ack = await s.call(sup, 'POST', `/api/items/${l.itemId}/acknowledge`);
    expect(ack.status).toBe(200);
    expect(ack.body).toMatchObject({ itemId: l.itemId, acknowledgedBy: 'sup' });
    expect(ack.body.escalationIds).toHaveLength(1);
    const again = await s.call(sup, 'POST', `/api/items/${l.itemId}/acknowledge`);
    expect(again.status).toBe(409);
    expect(again.body.message).toMatch(/acknowledged already/);
    const [other] = await s.db.query<{ id: number | string }>(
      null,
      'SELECT id FROM items WHERE desk_id = $1 AND id <> $2 ORDER BY id LIMIT 1',
      [deskId, l.itemId],
    );
    const plain = await s.call(sup, 'POST', `/api/items/${other.id}/acknowledge`);
    expect(plain.status).toBe(404);
    expect(plain.body.message).toMatch(/was never marked urgent/);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}/urgent`)).body).toEqual({ waiting: 0, items: [] });

    const audit = await s.call(sup, 'GET', `/api/audit?deskId=${deskId}&limit=1000`);
    const steps = (audit.body.events as Array<{ action: string; entityId: string; actor: string | null }>).filter(
      (e) => e.action === 'item.urgent' || e.action === 'item.acknowledge',
    );
    expect(steps.map((e) => e.action).sort()).toEqual(['item.acknowledge', 'item.urgent']);
    expect(steps.every((e) => e.entityId === String(l.itemId))).toBe(true);
    // Nothing more was announced by the replay or the acknowledgement.
    expect(receiver.received).toHaveLength(2);
  });
});
