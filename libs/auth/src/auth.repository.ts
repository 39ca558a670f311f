import type { EntityManager } from 'typeorm';
import { IsNull } from 'typeorm';
import { CredentialEntity, Database, UserEntity, type DbBool, type DbInt, type Role } from '#database';

/** A new row of `credentials`: a session or a personal API token, its secret stored hashed. */
export interface NewCredential {
  userId: number;
  kind: 'token' | 'session';
  secretHash: string;
  label: string | null;
  createdAt: Date;
  expiresAt: Date | null;
}

/** A credential with its user, as authentication reads it. */
export interface CredentialOwner {
  userId: number;
  name: string;
  role: Role;
  disabled: boolean;
  credentialId: number;
  kind: 'token' | 'session';
  expiresAt: Date | null;
  revoked: boolean;
  lastUsedAt: Date | null;
}

/**
 * All SQL of the accounts: `users` and `credentials`. Methods taking `m` run in the caller's write transaction.
 * Not a Nest provider of its own: {@link AuthService} makes it from the database handle, so that an operator command
 * can build the service from the handle alone.
 */
export class AuthRepository {
  constructor(private readonly db: Database) {}

  userByName(m: EntityManager | null, name: string): Promise<UserEntity | null> {
    return (m ?? this.db.manager).findOneBy(UserEntity, { name });
  }

  userById(m: EntityManager | null, id: number): Promise<UserEntity | null> {
    return (m ?? this.db.manager).findOneBy(UserEntity, { id });
  }

  /** Every account but the system ones, by id. */
  people(): Promise<UserEntity[]> {
    return this.db.manager.find(UserEntity, { where: { isSystem: false }, order: { id: 'ASC' } });
  }

  createUser(
    m: EntityManager,
    u: { name: string; role: Role; passwordHash: string | null; createdAt: Date },
  ): Promise<UserEntity> {
    return m.save(UserEntity, m.create(UserEntity, { ...u, disabled: false, isSystem: false }));
  }

  async updateUser(
    m: EntityManager,
    id: number,
    change: { role: Role; disabled: boolean; passwordHash?: string },
  ): Promise<void> {
    await m.update(UserEntity, { id }, change);
  }

  /** Enabled admins, counted in the transaction. */
  enabledAdmins(m: EntityManager): Promise<number> {
    return m.countBy(UserEntity, { role: 'admin', disabled: false });
  }

  /** Stores a credential; its id. */
  async insertCredential(m: EntityManager, c: NewCredential): Promise<number> {
    const r = await m.insert(CredentialEntity, { ...c, revokedAt: null, lastUsedAt: null });
    return Number(r.identifiers[0]?.id);
  }

  credentialBySecretHash(m: EntityManager, secretHash: string): Promise<CredentialEntity | null> {
    return m.findOneBy(CredentialEntity, { secretHash });
  }

  /** One of the user's tokens that is not revoked. */
  liveToken(m: EntityManager, userId: number, id: number): Promise<CredentialEntity | null> {
    return m.findOneBy(CredentialEntity, { id, userId, kind: 'token', revokedAt: IsNull() });
  }

  /** The user's tokens that are not revoked, newest first. */
  liveTokens(userId: number): Promise<CredentialEntity[]> {
    return this.db.manager.find(CredentialEntity, {
      where: { userId, kind: 'token', revokedAt: IsNull() },
      order: { id: 'DESC' },
    });
  }

  async revoke(m: EntityManager, credentialId: number, at: Date): Promise<void> {
    await m.update(CredentialEntity, { id: credentialId }, { revokedAt: at });
  }

  /** Revokes every live credential of the user; how many. */
  async revokeAllOf(m: EntityManager, userId: number, at: Date): Promise<number> {
    return (await m.update(CredentialEntity, { userId, revokedAt: IsNull() }, { revokedAt: at })).affected ?? 0;
  }

  /** Records when a credential was last used, in a write of its own. */
  async touch(credentialId: number, at: Date): Promise<void> {
    await this.db.write((m) => m.update(CredentialEntity, { id: credentialId }, { lastUsedAt: at }));
  }

  /** The credential with this secret hash and its user, in one statement (every request authenticates). */
  async credentialOwner(secretHash: string): Promise<CredentialOwner | undefined> {
    const row = await this.db.queryOne<{
      id: DbInt;
      name: string;
      role: Role;
      disabled: DbBool;
      credential_id: DbInt;
      kind: 'token' | 'session';
      expires_at: unknown;
      revoked_at: unknown;
      last_used_at: unknown;
    }>(
      null,
      `SELECT u.id, u.name, u.role, u.disabled, c.id AS credential_id, c.kind, c.expires_at, c.revoked_at, c.last_used_at
       FROM credentials c JOIN users u ON u.id = c.user_id WHERE c.secret_hash = $1`,
      [secretHash],
    );
    if (!row) return undefined;
    return {
      userId: Number(row.id),
      name: row.name,
      role: row.role,
      disabled: this.db.bool(row.disabled),
      credentialId: Number(row.credential_id),
      kind: row.kind,
      expiresAt: this.db.parseTime(row.expires_at),
      revoked: row.revoked_at !== null,
      lastUsedAt: this.db.parseTime(row.last_used_at),
    };
  }
}
