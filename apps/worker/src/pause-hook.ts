import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { AppConfig } from '#config';
import type { PauseHook } from '#models';

/**
 * The crash tests' hook: with CRIBRA_TEST_PAUSE set, the worker stops at that
 * point of a retrain, leaves a marker file in the data folder, and waits to
 * be killed. Without it, nothing happens.
 */
export function pauseHook(config: AppConfig): PauseHook {
  return async (point) => {
    if (config.testPauseAt !== point) return;
    writeFileSync(join(config.dataDir, `paused-${point}-${process.pid}`), String(Date.now()));
    await new Promise<never>(() => undefined);
  };
}
