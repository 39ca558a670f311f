import { existsSync } from 'node:fs';
import { Worker } from 'node:worker_threads';
import { Mutex } from '#database';
import type { LogisticModelJson, SparseVector } from '#learning';
import { threadScript } from './thread-path.js';

export interface TrainRequest {
  indices: Int32Array[];
  values: Float64Array[];
  labels: string[];
  categories: string[];
  hashBits: number;
  /** The model to start from (the desk's current version), or null for a cold start. */
  warmStart: LogisticModelJson | null;
  /** The model the weights are pulled towards instead of zero (see trainLogisticModel's prior), or null. */
  prior: LogisticModelJson | null;
}

export type TrainReply = { ok: true; model: LogisticModelJson } | { ok: false; error: string };

/**
 * One training thread per process, started at the first training and kept:
 * starting a thread and loading the learning core into it costs a few
 * hundred milliseconds, on every retrain otherwise. Trainings take turns.
 * A thread that dies is replaced at the next training.
 */
let thread: Worker | null = null;
const turns = new Mutex();

function trainingThread(): Worker {
  if (thread) return thread;
  const script = threadScript(import.meta.url, 'training.thread');
  if (!existsSync(script)) throw new Error(`${script} is missing: build first (npm run build)`);
  const worker = new Worker(script);
  // An idle training thread does not keep the process alive.
  worker.unref();
  worker.once('exit', () => {
    if (thread === worker) thread = null;
  });
  thread = worker;
  return worker;
}

/**
 * Trains in the process's training thread; the vectors' buffers are moved, not copied. `warmStart` is the
 * previous version's classifier (see trainLogisticModel's warm start), or null.
 */
export async function trainInThread(
  vectors: SparseVector[],
  labels: string[],
  categories: string[],
  hashBits: number,
  warmStart: LogisticModelJson | null = null,
  prior: LogisticModelJson | null = null,
): Promise<LogisticModelJson> {
  const req: TrainRequest = {
    indices: vectors.map((v) => Int32Array.from(v.indices)),
    values: vectors.map((v) => Float64Array.from(v.values)),
    labels,
    categories,
    hashBits,
    warmStart,
    prior,
  };
  const reply = await turns.run(() => {
    const worker = trainingThread();
    return new Promise<TrainReply>((resolve, reject) => {
      const done = () => {
        worker.off('message', onMessage);
        worker.off('error', onError);
        worker.off('exit', onExit);
      };
      const onMessage = (r: TrainReply) => {
        done();
        resolve(r);
      };
      const onError = (e: Error) => {
        done();
        reject(e);
      };
      const onExit = (code: number) => {
        done();
        reject(new Error(`training thread exited with code ${code}`));
      };
      worker.on('message', onMessage);
      worker.on('error', onError);
      worker.on('exit', onExit);
      worker.postMessage(req, [
        ...req.indices.map((a) => a.buffer as ArrayBuffer),
        ...req.values.map((a) => a.buffer as ArrayBuffer),
      ]);
    });
  });
  if (!reply.ok) throw new Error(reply.error);
  return reply.model;
}
