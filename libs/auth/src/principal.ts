import type { Role } from '#database';

/** The authenticated user of a request. */
export interface Principal {
  id: number;
  name: string;
  role: Role;
  /** How the request authenticated. */
  via: 'session' | 'token';
}

export const SESSION_COOKIE = 'cribra_session';
