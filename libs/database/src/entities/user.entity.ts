import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export const ROLES = ['reviewer', 'supervisor', 'auditor', 'admin'] as const;
export type Role = (typeof ROLES)[number];

/** The name of the system account that holds the labels of archive imports. */
export const ARCHIVE_ACCOUNT = 'archive';

export class UserEntity {
  id!: number;
  name!: string;
  role!: Role;
  /** scrypt hash in the form `scrypt$N$r$p$salt$hash`; null when the user signs in with tokens only. */
  passwordHash!: string | null;
  disabled!: boolean;
  /** A system account (`archive`, the holder of imported labels): it cannot sign in, is not listed, cannot be changed. */
  isSystem!: boolean;
  createdAt!: Date;
}

export const userSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<UserEntity>({
    name: 'UserEntity',
    target: UserEntity,
    tableName: 'users',
    columns: {
      id: c.id(),
      name: c.varchar('name', 100),
      role: c.varchar('role', 20),
      passwordHash: c.varchar('password_hash', 200, true),
      disabled: c.bool('disabled'),
      isSystem: c.bool('is_system'),
      createdAt: c.time('created_at'),
    },
  });
};
