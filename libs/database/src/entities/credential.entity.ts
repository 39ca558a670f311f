import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/**
 * A secret that authenticates a user: a personal API token (`kind = 'token'`,
 * no expiry) or a browser session (`kind = 'session'`). Only the SHA-256 of
 * the secret is stored.
 */
export class CredentialEntity {
  id!: number;
  userId!: number;
  kind!: 'token' | 'session';
  secretHash!: string;
  label!: string | null;
  createdAt!: Date;
  expiresAt!: Date | null;
  revokedAt!: Date | null;
  lastUsedAt!: Date | null;
}

export const credentialSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<CredentialEntity>({
    name: 'CredentialEntity',
    target: CredentialEntity,
    tableName: 'credentials',
    columns: {
      id: c.id(),
      userId: c.int('user_id'),
      kind: c.varchar('kind', 10),
      secretHash: c.varchar('secret_hash', 64),
      label: c.varchar('label', 100, true),
      createdAt: c.time('created_at'),
      expiresAt: c.time('expires_at', true),
      revokedAt: c.time('revoked_at', true),
      lastUsedAt: c.time('last_used_at', true),
    },
  });
};
