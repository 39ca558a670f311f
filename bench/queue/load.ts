/**
 * The load: each reviewer loops lease → verdict as fast as the service
 * answers, from one client process over loopback (Node's fetch keeps its
 * connections alive). A warm-up phase runs first and is not measured.
 */
import { randomUUID } from 'node:crypto';
import { cpuBetween, readCpu } from './cpu.js';
import { Samples } from './stats.js';

export interface LoadOptions {
  baseUrl: string;
  deskId: number;
  categories: readonly string[];
  reviewerTokens: readonly string[];
  warmupS: number;
  durationS: number;
  /** The API process, to report its CPU use over the measured window. */
  apiPid?: number;
}

export interface LoadResult {
  durationS: number;
  roundTrips: number;
  lease: Samples;
  verdict: Samples;
  errors: number;
  warmupErrors: number;
  errorsByKind: Record<string, number>;
  /** Lease requests answered 204: the pool ran dry (should not happen with a pool much larger than the run). */
  emptyPool: number;
  cpu: ReturnType<typeof cpuBetween> | null;
}

/** A reviewer that cannot reach the service this many times in a row stops the run. */
const MAX_CONSECUTIVE_FAILURES = 50;

interface Grant {
  lease: { id: string };
  item: { id: number };
}

export async function runLoad(o: LoadOptions): Promise<LoadResult> {
  const leaseUrl = `${o.baseUrl}/api/desks/${o.deskId}/leases`;
  const verdictUrl = `${o.baseUrl}/api/desks/${o.deskId}/verdicts`;
  const start = performance.now();
  const measureFrom = start + o.warmupS * 1000;
  const endAt = measureFrom + o.durationS * 1000;
  const result: LoadResult = {
    durationS: o.durationS,
    roundTrips: 0,
    lease: new Samples(),
    verdict: new Samples(),
    errors: 0,
    warmupErrors: 0,
    errorsByKind: {},
    emptyPool: 0,
    cpu: null,
  };
  let cpuAtStart: ReturnType<typeof readCpu> | null = null;
  const cpuStart = setTimeout(() => (cpuAtStart = readCpu(o.apiPid)), measureFrom - performance.now());
  const cpuEnd = setTimeout(() => {
    if (cpuAtStart) result.cpu = cpuBetween(cpuAtStart, readCpu(o.apiPid));
  }, endAt - performance.now());
  const fail = (kind: string, at: number) => {
    if (at >= measureFrom) result.errors++;
    else result.warmupErrors++;
    result.errorsByKind[kind] = (result.errorsByKind[kind] ?? 0) + 1;
  };

  /** One request; the latency runs until the whole response body has arrived. */
  const call = async (url: string, headers: Record<string, string>, body?: string) => {
    const t0 = performance.now();
    const res = await fetch(url, { method: 'POST', headers, body });
    const text = await res.text();
    return { status: res.status, text, t0, ms: performance.now() - t0 };
  };

  const reviewer = async (index: number, token: string) => {
    const auth = { authorization: `Bearer ${token}` };
    const json = { ...auth, 'content-type': 'application/json' };
    let consecutiveFailures = 0;
    for (let n = 0; performance.now() < endAt; n++) {
      let phase = 'lease';
      try {
        const lease = await call(leaseUrl, auth);
        const leaseMeasured = lease.t0 >= measureFrom;
        if (leaseMeasured) result.lease.add(lease.ms);
        if (lease.status === 204) {
          result.emptyPool++;
          return;
        }
        if (lease.status !== 201) {
          fail(`lease ${lease.status}`, lease.t0);
          consecutiveFailures++;
          if (consecutiveFailures >= MAX_CONSECUTIVE_FAILURES)
            throw new Error(
              `reviewer ${index}: ${consecutiveFailures} failures in a row, last: lease HTTP ${lease.status} ${lease.text.slice(0, 300)}`,
            );
          continue;
        }
        const grant = JSON.parse(lease.text) as Grant;
        phase = 'verdict';
        const category = o.categories[(index + n) % o.categories.length];
        const verdict = await call(
          verdictUrl,
          json,
          JSON.stringify({
            leaseId: grant.lease.id,
            itemId: grant.item.id,
            category,
            clientId: `bench-${index}-${n}-${randomUUID()}`,
          }),
        );
        if (verdict.t0 >= measureFrom) result.verdict.add(verdict.ms);
        if (verdict.status !== 201) {
          fail(`verdict ${verdict.status}`, verdict.t0);
          consecutiveFailures++;
          if (consecutiveFailures >= MAX_CONSECUTIVE_FAILURES)
            throw new Error(
              `reviewer ${index}: ${consecutiveFailures} failures in a row, last: verdict HTTP ${verdict.status} ${verdict.text.slice(0, 300)}`,
            );
          continue;
        }
        consecutiveFailures = 0;
        const done = verdict.t0 + verdict.ms;
        if (done >= measureFrom && done <= endAt) result.roundTrips++;
      } catch (e) {
        if (e instanceof Error && e.message.startsWith(`reviewer ${index}:`)) throw e;
        fail(`${phase} network`, performance.now());
        consecutiveFailures++;
        if (consecutiveFailures >= MAX_CONSECUTIVE_FAILURES)
          throw new Error(`reviewer ${index}: ${consecutiveFailures} failures in a row, last: ${String(e)}`, {
            cause: e,
          });
      }
    }
  };

  try {
    await Promise.all(o.reviewerTokens.map((t, i) => reviewer(i, t)));
  } finally {
    clearTimeout(cpuStart);
    clearTimeout(cpuEnd);
  }
  return result;
}
