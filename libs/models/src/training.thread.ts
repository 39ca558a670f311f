import { parentPort } from 'node:worker_threads';
import { trainLogisticModel } from '#learning';
import type { TrainRequest, TrainReply } from './training-protocol.js';

// Runs trainings off the worker's event loop, so the worker keeps renewing its job locks; one request at a time.
parentPort?.on('message', (req: TrainRequest) => {
  let reply: TrainReply;
  try {
    const vectors = req.indices.map((indices, i) => ({ indices, values: req.values[i] }));
    const model = trainLogisticModel(vectors, req.labels, { categories: req.categories, hashBits: req.hashBits });
    reply = { ok: true, model: model.toJSON() };
  } catch (e) {
    reply = { ok: false, error: (e as Error).message };
  }
  parentPort?.postMessage(reply);
});
