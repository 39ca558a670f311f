export {
  Conflict,
  DomainError,
  Gone,
  InvalidInput,
  isDomainError,
  NotAllowed,
  NotFound,
  TooLarge,
  type ErrorKind,
} from './domain-error.js';
