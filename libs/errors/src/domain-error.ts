/**
 * What went wrong, in the request's own terms and free of any transport: the services and the libraries throw these,
 * the API's one filter (`DomainErrorFilter`) turns them into HTTP answers, and the worker's one rule gives up on a
 * job that met one instead of retrying it (the same input would fail the same way).
 */
export type ErrorKind = 'invalid' | 'forbidden' | 'not-found' | 'conflict' | 'gone' | 'too-large';

/**
 * The base of every domain error. The message is one sentence, or a list when several things are wrong at once (an
 * HTTP answer gives the list as it is; `message` joins it); `details` travel with it (an HTTP answer shows them beside
 * the message).
 */
export abstract class DomainError extends Error {
  abstract readonly kind: ErrorKind;
  /** The list given, or null for a single message. */
  readonly messages: readonly string[] | null;
  constructor(
    message: string | readonly string[],
    readonly details: Readonly<Record<string, unknown>> = {},
  ) {
    super(typeof message === 'string' ? message : message.join('; '));
    this.messages = typeof message === 'string' ? null : [...message];
    this.name = new.target.name;
  }
}

/** The input cannot be used as given: a bad value, an unknown category, settings that contradict each other. */
export class InvalidInput extends DomainError {
  readonly kind = 'invalid';
}

/** The caller may not do this here (a role or a rule of the desk forbids it). */
export class NotAllowed extends DomainError {
  readonly kind = 'forbidden';
}

/** There is no such thing, or the caller may not know that there is. */
export class NotFound extends DomainError {
  readonly kind = 'not-found';
}

/** The request clashes with the state of things: decided already, held by someone else, changed meanwhile. */
export class Conflict extends DomainError {
  readonly kind = 'conflict';
}

/** It was there and is no longer (erased, expired). */
export class Gone extends DomainError {
  readonly kind = 'gone';
}

/** The input is larger than the service takes. */
export class TooLarge extends DomainError {
  readonly kind = 'too-large';
}

/** Whether `e` is a domain error. */
export function isDomainError(e: unknown): e is DomainError {
  return e instanceof DomainError;
}
