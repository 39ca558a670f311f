/**
 * The benchmark's desk: users, one desk and a pool of distinct short texts,
 * all created through the public API (the import runs on the real path:
 * upload, BullMQ job, worker).
 */
import { setTimeout as sleep } from 'node:timers/promises';

/** Calls the API with a bearer token and returns the parsed JSON body; fails on an unexpected status. */
export async function api<T>(
  baseUrl: string,
  token: string,
  method: string,
  path: string,
  body?: unknown,
  expect: number[] = [200, 201, 202],
): Promise<T> {
  const isBuffer = Buffer.isBuffer(body);
  const res = await fetch(`${baseUrl}${path}`, {
    method,
    headers: {
      authorization: `Bearer ${token}`,
      ...(body === undefined ? {} : { 'content-type': isBuffer ? 'application/x-ndjson' : 'application/json' }),
    },
    body: body === undefined ? undefined : isBuffer ? body : JSON.stringify(body),
  });
  const text = await res.text();
  if (!expect.includes(res.status)) throw new Error(`${method} ${path}: HTTP ${res.status}: ${text.slice(0, 500)}`);
  return (text === '' ? undefined : JSON.parse(text)) as T;
}

/** A small seeded generator (mulberry32), so every run imports the same texts. */
function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const WORDS = (
  'the a this that my your our their park bench market bus stop library pool garden street corner square bakery cafe school ' +
  'meeting council notice parking bin noise dog cat bike lamp fence tree path bridge river hill festival concert band game match ' +
  'team coach referee score weekend tonight tomorrow yesterday morning evening late early again still never always really very ' +
  'quite so too honestly seriously anyway loud quiet broken closed open busy empty crowded dirty clean new old great terrible ' +
  'awful lovely fine weird funny angry happy sad tired is was were will would could should might has had have do did does ' +
  'know think saw heard said told asked wanted fixed moved left came went stayed called posted shared liked hated loved ' +
  'about near behind after before during because but and or if when while until since neighbours volunteers everyone nobody ' +
  'someone people kids parents owners drivers riders staff mayor'
).split(' ');

/**
 * `count` distinct forum-style texts of 8 to 24 words as NDJSON. Each ends in
 * a post number, so no two normalise to the same text and none is dropped as
 * a duplicate.
 */
export function ndjsonPool(count: number, seed = 20_240_601): Buffer {
  const rand = mulberry32(seed);
  const lines = new Array<string>(count);
  for (let i = 0; i < count; i++) {
    const n = 8 + Math.floor(rand() * 17);
    const words = new Array<string>(n);
    for (let w = 0; w < n; w++) words[w] = WORDS[Math.floor(rand() * WORDS.length)]!;
    lines[i] = JSON.stringify({ text: `${words.join(' ')} (post ${i + 1})` });
  }
  return Buffer.from(`${lines.join('\n')}\n`, 'utf8');
}

interface ImportView {
  state: 'receiving' | 'queued' | 'running' | 'done' | 'failed';
  rowsRead: number;
  imported: number;
  duplicates: number;
  rejected: number;
  failure: string | null;
}

/** Uploads the pool and waits until the worker has imported it. */
export async function importPool(
  baseUrl: string,
  supervisorToken: string,
  deskId: number,
  body: Buffer,
  timeoutMs: number,
  onProgress: (v: ImportView) => void,
): Promise<ImportView & { seconds: number }> {
  const t0 = performance.now();
  const { importId } = await api<{ importId: string }>(
    baseUrl,
    supervisorToken,
    'POST',
    `/api/desks/${deskId}/imports`,
    body,
  );
  let lastReport = t0;
  while (performance.now() - t0 < timeoutMs) {
    const view = await api<ImportView>(baseUrl, supervisorToken, 'GET', `/api/imports/${importId}`);
    if (view.state === 'done') return { ...view, seconds: (performance.now() - t0) / 1000 };
    if (view.state === 'failed') throw new Error(`import ${importId} failed: ${view.failure ?? 'no reason given'}`);
    if (performance.now() - lastReport > 5_000) {
      onProgress(view);
      lastReport = performance.now();
    }
    await sleep(250);
  }
  throw new Error(`import ${importId} was not done within ${timeoutMs / 1000} s`);
}
