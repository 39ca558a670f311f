import { describe, expect, it } from 'vitest';
import {
  Conflict,
  DomainError,
  Gone,
  InvalidInput,
  isDomainError,
  NotAllowed,
  NotFound,
  TooLarge,
} from './domain-error.js';

describe('domain errors', () => {
  it('carry their kind, their name and their message', () => {
    const cases: Array<[DomainError, string, string]> = [
      [new InvalidInput('limit: expected 1 to 500'), 'invalid', 'InvalidInput'],
      [new NotAllowed('reviewers may not settle'), 'forbidden', 'NotAllowed'],
      [new NotFound('no desk 7'), 'not-found', 'NotFound'],
      [new Conflict('decided already'), 'conflict', 'Conflict'],
      [new Gone('the upload is gone'), 'gone', 'Gone'],
      [new TooLarge('over 50 MB'), 'too-large', 'TooLarge'],
    ];
    for (const [e, kind, name] of cases) {
      expect(e.kind).toBe(kind);
      expect(e.name).toBe(name);
      expect(e).toBeInstanceOf(Error);
      expect(isDomainError(e)).toBe(true);
      expect(e.messages).toBeNull();
      expect(e.details).toEqual({});
    }
    expect(isDomainError(new Error('plain'))).toBe(false);
    expect(isDomainError('no desk 7')).toBe(false);
  });

  it('keep a list of messages as a list, and join it for the one-line message', () => {
    const e = new InvalidInput(['watch: threat is not a category', 'coverageTargets.ok: expected 0.5 to 0.999']);
    expect(e.messages).toEqual(['watch: threat is not a category', 'coverageTargets.ok: expected 0.5 to 0.999']);
    expect(e.message).toBe('watch: threat is not a category; coverageTargets.ok: expected 0.5 to 0.999');
  });

  it('carry details beside the message', () => {
    const e = new Conflict('a simulated reviewer is already working', { state: 'running', verdicts: 3 });
    expect(e.details).toEqual({ state: 'running', verdicts: 3 });
  });
});
