/**
 * The Redis key that asks a desk's simulated reviewer to stop. The API sets
 * it; the running job reads it between two items (BullMQ cannot interrupt an
 * active job from outside).
 */
export function simulationStopKey(queuePrefix: string, deskId: number): string {
  return `${queuePrefix}:simulation:stop:${deskId}`;
}

/** How long a stop request stays in Redis when no run picks it up. */
export const STOP_SIGNAL_SECONDS = 3600;
