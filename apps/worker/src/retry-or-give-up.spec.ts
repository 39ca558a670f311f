import { UnrecoverableError } from 'bullmq';
import { describe, expect, it } from 'vitest';
import { Conflict, NotFound } from '#errors';
import { retryOrGiveUp } from './workers.service.js';

describe('the worker’s rule on a failed job', () => {
  it('gives up at once on a domain error, keeping its message', () => {
    for (const e of [new NotFound('no import 12'), new Conflict('the desk cannot have a simulated reviewer')]) {
      const out = retryOrGiveUp(e);
      expect(out).toBeInstanceOf(UnrecoverableError);
      expect((out as Error).message).toBe(e.message);
    }
  });

  it('leaves anything else to be retried, unchanged', () => {
    const lost = new Error('Connection is closed.');
    expect(retryOrGiveUp(lost)).toBe(lost);
    expect(retryOrGiveUp('odd')).toBe('odd');
  });
});
