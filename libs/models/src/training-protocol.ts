import { existsSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import type { LogisticModelJson, SparseVector } from '#learning';
import { threadScript } from './thread-path.js';

export interface TrainRequest {
  indices: Int32Array[];
  values: Float64Array[];
  labels: string[];
  categories: string[];
  hashBits: number;
}

export type TrainReply = { ok: true; model: LogisticModelJson } | { ok: false; error: string };

/** Trains in a worker thread; the vectors' buffers are moved, not copied. */
export async function trainInThread(vectors: SparseVector[], labels: string[], categories: string[], hashBits: number): Promise<LogisticModelJson> {
  const script = threadScript(import.meta.url, 'training.thread');
  if (!existsSync(script)) throw new Error(`${script} is missing: build first (npm run build)`);
  const req: TrainRequest = {
    indices: vectors.map((v) => Int32Array.from(v.indices)),
    values: vectors.map((v) => Float64Array.from(v.values)),
    labels,
    categories,
    hashBits,
  };
  const worker = new Worker(script);
  try {
    const reply = await new Promise<TrainReply>((resolve, reject) => {
      worker.once('message', resolve);
      worker.once('error', reject);
      worker.once('exit', (code) => reject(new Error(`training thread exited with code ${code}`)));
      worker.postMessage(req, [...req.indices.map((a) => a.buffer as ArrayBuffer), ...req.values.map((a) => a.buffer as ArrayBuffer)]);
    });
    if (!reply.ok) throw new Error(reply.error);
    return reply.model;
  } finally {
    await worker.terminate();
  }
}
