import { parentPort } from 'node:worker_threads';
import { LogisticModel, trainLogisticModel } from '#learning';
import type { TrainRequest, TrainReply } from './training-protocol.js';

// Runs trainings off the worker's event loop, so the worker keeps renewing its job locks; one request at a time.
parentPort?.on('message', (req: TrainRequest) => {
  let reply: TrainReply;
  try {
    const vectors = req.indices.map((indices, i) => ({ indices, values: req.values[i] }));
    // A previous version that cannot be read (or is one-vs-rest) only costs the warm start.
    let warmStart: LogisticModel | null = null;
    try {
      warmStart = req.warmStart === null ? null : LogisticModel.fromJSON(req.warmStart);
    } catch {
      warmStart = null;
    }
    const model = trainLogisticModel(vectors, req.labels, {
      categories: req.categories,
      hashBits: req.hashBits,
      warmStart,
      // The transferred model of a desk started from another desk's version: the weights are pulled towards it.
      prior: req.prior === null ? null : LogisticModel.fromJSON(req.prior),
    });
    reply = { ok: true, model: model.toJSON() };
  } catch (e) {
    reply = { ok: false, error: (e as Error).message };
  }
  parentPort?.postMessage(reply);
});
