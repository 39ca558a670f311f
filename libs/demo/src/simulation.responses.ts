import { named, z } from '#api-docs';

const run = {
  state: z.enum(['idle', 'running', 'finished', 'stopped']),
  startedAt: z.iso.datetime({ offset: true }).optional(),
  until: z.iso.datetime({ offset: true }).optional(),
  verdicts: z.int().describe('verdicts the simulated reviewer has given in this run'),
  detail: z.string().optional(),
};

export const SimulationRunAnswer = named('SimulationRun', z.strictObject(run));

export const SimulationStatusAnswer = named(
  'SimulationStatus',
  z.strictObject({
    available: z.boolean().describe('false on a desk that holds anything but the generated demo posts'),
    reason: z.string().optional().describe('why it is not available'),
    ...run,
  }),
);
