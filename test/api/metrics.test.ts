import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QUEUES } from '#queues';
import { DATABASE_KINDS } from '../support/databases.js';
import { startStack, TEST_REDIS_URL, type Stack } from '../support/stack.js';

const TOKEN = 'metrics-token-for-the-test-0123456789';

interface Sample {
  name: string;
  labels: Record<string, string>;
  value: number;
}

/**
 * A strict reader of the Prometheus text exposition format (version 0.0.4): every line is a `# HELP`, a `# TYPE` or
 * a sample `name{label="value",…} number`; anything else throws, and every sample's family has a TYPE before it.
 */
function parsePrometheus(text: string): Sample[] {
  const typed = new Map<string, string>();
  const samples: Sample[] = [];
  for (const line of text.split('\n')) {
    if (line === '') continue;
    const meta = /^# (HELP|TYPE) ([a-zA-Z_:][a-zA-Z0-9_:]*) (.*)$/.exec(line);
    if (meta) {
      if (meta[1] === 'TYPE') {
        expect(['counter', 'gauge', 'histogram', 'summary', 'untyped']).toContain(meta[3]);
        typed.set(meta[2], meta[3]);
      }
      continue;
    }
    // Values are read as Go's strconv.ParseFloat reads them, which takes NaN and Inf in any case (prom-client writes
    // an empty summary's mean as `Nan`); recalled from memory of the Prometheus text format and Go's strconv.
    const m = /^([a-zA-Z_:][a-zA-Z0-9_:]*)(?:\{(.*)\})? (-?[0-9.e+-]+|nan|[+-]?inf)$/i.exec(line);
    if (!m) throw new Error(`not a Prometheus line: ${line}`);
    const labels: Record<string, string> = {};
    const body = (m[2] as string | undefined) ?? '';
    const labelRe = /([a-zA-Z_][a-zA-Z0-9_]*)="((?:[^"\\]|\\.)*)"(,|$)/y;
    for (let at = 0; at < body.length;) {
      labelRe.lastIndex = at;
      const l = labelRe.exec(body);
      if (!l) throw new Error(`bad labels in: ${line}`);
      labels[l[1]] = l[2];
      at = labelRe.lastIndex;
    }
    const family = m[1].replace(/_(bucket|sum|count|total)$/, '');
    expect(typed.has(m[1]) || typed.has(family), `no TYPE for ${m[1]}`).toBe(true);
    const inf = /^([+-]?)inf$/i.exec(m[3]);
    samples.push({ name: m[1], labels, value: inf ? (inf[1] === '-' ? -Infinity : Infinity) : Number(m[3]) });
  }
  return samples;
}

const valueOf = (samples: Sample[], name: string, labels: Record<string, string>) =>
  samples.find((s) => s.name === name && Object.entries(labels).every(([k, v]) => s.labels[k] === v))?.value;

describe.each(DATABASE_KINDS)('GET /metrics on %s', (kind) => {
  let s: Stack;
  beforeAll(async () => {
    // No worker: jobs added to a queue stay waiting, so the gauges must show them.
    s = await startStack(kind, { worker: false, env: { METRICS_TOKEN: TOKEN } });
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  const scrape = async () => {
    const r = await fetch(`${s.base}/metrics`, { headers: { authorization: `Bearer ${TOKEN}` } });
    expect(r.status).toBe(200);
    expect(r.headers.get('content-type')).toMatch(/^text\/plain; version=0\.0\.4/);
    return parsePrometheus(await r.text());
  };

  it('refuses a request without the token, or with another one, even an admin’s', async () => {
    expect((await fetch(`${s.base}/metrics`)).status).toBe(401);
    const admin = await s.user('ops-admin', 'admin');
    expect((await fetch(`${s.base}/metrics`, { headers: { authorization: `Bearer ${admin}` } })).status).toBe(401);
  });

  it('parses as Prometheus text; its queue gauges move when jobs are added; a desk reports its coverage alert', async () => {
    const sup = await s.user('ops-sup', 'supervisor');
    const desk = await s.call<{ id: number }>(sup, 'POST', '/api/desks', { name: 'Metrics', categories: ['a', 'b'] });
    expect(desk.status).toBe(201);
    expect((await s.call(sup, 'GET', '/api/desks')).status).toBe(200);

    const before = await scrape();
    const waiting = (samples: Sample[]) =>
      valueOf(samples, 'cribra_queue_jobs', { queue: QUEUES.reports, state: 'waiting' }) ?? -1;
    expect(waiting(before)).toBeGreaterThanOrEqual(0);
    expect(valueOf(before, 'cribra_http_requests_total', { route: '/api/desks', method: 'GET', status: '200' })).toBe(
      1,
    );
    expect(valueOf(before, 'cribra_desk_coverage_alert', { desk: String(desk.body.id) })).toBe(0);

    const connection = new Redis(TEST_REDIS_URL, { maxRetriesPerRequest: null });
    const queue = new Queue(QUEUES.reports, { connection, prefix: s.config.queuePrefix });
    try {
      await queue.add('write-report', { deskId: desk.body.id, version: 1 });
      await queue.add('write-report', { deskId: desk.body.id, version: 2 });
    } finally {
      await queue.close();
      connection.disconnect();
    }
    const after = await scrape();
    expect(waiting(after)).toBe(waiting(before) + 2);
    // A scrape is a request too, counted once its answer is finished.
    expect(valueOf(after, 'cribra_http_requests_total', { route: '/metrics', status: '200' })).toBeGreaterThanOrEqual(
      1,
    );
  });
});
