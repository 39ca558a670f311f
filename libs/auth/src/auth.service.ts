import { Inject, Injectable } from '@nestjs/common';
import { IsNull } from 'typeorm';
import { APP_CONFIG, type AppConfig } from '#config';
import { CredentialEntity, Database, ROLES, UserEntity, type DbInt, type Role } from '#database';
import { AuditService, type AuditActor } from '#audit';
import type { Principal } from './principal.js';
import { hashPassword, newSecret, secretHash, verifyPassword } from './secrets.js';

export class AuthError extends Error {}

/** How long an authentication answer is reused within one process. */
export const AUTH_CACHE_MS = 3000;

/** Users, passwords, sessions and personal API tokens. */
@Injectable()
export class AuthService {
  /** Failed sign-ins per user name in the current minute, to slow down guessing. */
  private readonly failures = new Map<string, { minute: number; count: number }>();
  private readonly cache = new Map<string, { principal: Principal | null; until: number; userId: number | null }>();

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async createUser(
    actor: AuditActor,
    input: { name: string; role: Role; password?: string },
  ): Promise<{ user: UserEntity; token: string }> {
    const name = input.name.trim();
    if (!/^[\p{L}\p{N}_.@-]{1,100}$/u.test(name)) throw new AuthError('name: 1–100 letters, digits, or _ . @ -');
    if (!ROLES.includes(input.role)) throw new AuthError(`role: expected one of ${ROLES.join(', ')}`);
    const passwordHash = input.password !== undefined ? await hashPassword(input.password) : null;
    return this.db.write(async (m) => {
      if (await m.findOneBy(UserEntity, { name }))
        throw new AuthError(`a user named ${JSON.stringify(name)} exists already`);
      const user = await m.save(
        UserEntity,
        m.create(UserEntity, { name, role: input.role, passwordHash, disabled: false, createdAt: new Date() }),
      );
      const token = newSecret('token');
      await m.insert(CredentialEntity, {
        userId: user.id,
        kind: 'token',
        secretHash: secretHash(token),
        label: 'first token',
        createdAt: new Date(),
        expiresAt: null,
        revokedAt: null,
        lastUsedAt: null,
      });
      await this.audit.record(m, actor, {
        action: 'user.create',
        entityType: 'user',
        entityId: user.id,
        after: { name, role: input.role, password: passwordHash !== null },
      });
      return { user, token };
    });
  }

  async listUsers(): Promise<UserEntity[]> {
    return this.db.manager.find(UserEntity, { order: { id: 'ASC' } });
  }

  async updateUser(
    actor: AuditActor,
    id: number,
    change: { role?: Role; disabled?: boolean; password?: string },
  ): Promise<UserEntity> {
    const passwordHash = change.password !== undefined ? await hashPassword(change.password) : undefined;
    return this.db.write(async (m) => {
      const user = await m.findOneBy(UserEntity, { id });
      if (!user) throw new AuthError(`no user ${id}`);
      const before = { role: user.role, disabled: user.disabled };
      if (change.role !== undefined) user.role = change.role;
      if (change.disabled !== undefined) user.disabled = change.disabled;
      if (passwordHash !== undefined) user.passwordHash = passwordHash;
      await m.update(
        UserEntity,
        { id },
        { role: user.role, disabled: user.disabled, ...(passwordHash ? { passwordHash } : {}) },
      );
      if (change.disabled)
        await m.update(CredentialEntity, { userId: id, revokedAt: IsNull() }, { revokedAt: new Date() });
      this.forgetUser(id);
      await this.audit.record(m, actor, {
        action: 'user.update',
        entityType: 'user',
        entityId: id,
        before,
        after: { role: user.role, disabled: user.disabled, passwordChanged: passwordHash !== undefined },
      });
      return user;
    });
  }

  /** Checks a name and password; returns a new session secret for the cookie. */
  async login(name: string, password: string): Promise<{ secret: string; principal: Principal; expiresAt: Date }> {
    const minute = Math.floor(Date.now() / 60_000);
    const f = this.failures.get(name);
    if (f && f.minute === minute && f.count >= 10)
      throw new AuthError('too many failed sign-ins for this name; wait a minute');
    const user = await this.db.manager.findOneBy(UserEntity, { name });
    const ok =
      user && !user.disabled && user.passwordHash !== null && (await verifyPassword(password, user.passwordHash));
    if (!ok) {
      this.failures.set(name, { minute, count: f && f.minute === minute ? f.count + 1 : 1 });
      throw new AuthError('wrong name or password');
    }
    this.failures.delete(name);
    const secret = newSecret('session');
    const expiresAt = new Date(Date.now() + this.config.sessionHours * 3600_000);
    await this.db.write(async (m) => {
      await m.insert(CredentialEntity, {
        userId: user.id,
        kind: 'session',
        secretHash: secretHash(secret),
        label: null,
        createdAt: new Date(),
        expiresAt,
        revokedAt: null,
        lastUsedAt: null,
      });
      await this.audit.record(
        m,
        { id: user.id, name: user.name },
        { action: 'session.start', entityType: 'user', entityId: user.id },
      );
    });
    return { secret, principal: { id: user.id, name: user.name, role: user.role, via: 'session' }, expiresAt };
  }

  async logout(secret: string): Promise<void> {
    await this.db.write(async (m) => {
      const cred = await m.findOneBy(CredentialEntity, { secretHash: secretHash(secret), kind: 'session' });
      if (!cred || cred.revokedAt) return;
      await m.update(CredentialEntity, { id: cred.id }, { revokedAt: new Date() });
      this.cache.delete(cred.secretHash);
      const user = await m.findOneBy(UserEntity, { id: cred.userId });
      await this.audit.record(
        m,
        { id: cred.userId, name: user?.name ?? '?' },
        { action: 'session.end', entityType: 'user', entityId: cred.userId },
      );
    });
  }

  /**
   * Resolves a session or token secret to its user; null when unknown,
   * expired, revoked or disabled. Answers are kept for a few seconds so a
   * reviewer's stream of requests does not cost a lookup each; sign-out and
   * account changes in this process drop them at once, other processes see
   * them within {@link AUTH_CACHE_MS}.
   */
  async authenticate(secret: string): Promise<Principal | null> {
    if (!/^cb[ts]_[A-Za-z0-9_-]{43}$/.test(secret)) return null;
    const hash = secretHash(secret);
    const now = Date.now();
    const hit = this.cache.get(hash);
    if (hit && hit.until > now) return hit.principal;
    const row = await this.db.queryOne<{
      id: DbInt;
      name: string;
      role: Role;
      disabled: boolean | number;
      kind: 'token' | 'session';
      expires_at: unknown;
      revoked_at: unknown;
    }>(
      null,
      'SELECT u.id, u.name, u.role, u.disabled, c.kind, c.expires_at, c.revoked_at FROM credentials c JOIN users u ON u.id = c.user_id WHERE c.secret_hash = $1',
      [hash],
    );
    const expires = row ? this.db.parseTime(row.expires_at) : null;
    const valid =
      row &&
      row.revoked_at === null &&
      !(row.disabled === true || row.disabled === 1) &&
      !(expires && expires.getTime() <= now);
    const principal: Principal | null = valid
      ? { id: Number(row.id), name: row.name, role: row.role, via: row.kind }
      : null;
    if (this.cache.size > 10_000) this.cache.clear();
    this.cache.set(hash, { principal, until: now + AUTH_CACHE_MS, userId: principal?.id ?? null });
    return principal;
  }

  private forgetUser(userId: number): void {
    for (const [k, v] of this.cache) if (v.userId === userId) this.cache.delete(k);
  }

  /** A new personal API token for the user; the secret is returned once and stored hashed. */
  async createToken(principal: Principal, label: string | undefined): Promise<{ id: number; token: string }> {
    const token = newSecret('token');
    return this.db.write(async (m) => {
      const r = await m.insert(CredentialEntity, {
        userId: principal.id,
        kind: 'token',
        secretHash: secretHash(token),
        label: label ?? null,
        createdAt: new Date(),
        expiresAt: null,
        revokedAt: null,
        lastUsedAt: null,
      });
      const id = Number(r.identifiers[0]?.id);
      await this.audit.record(m, principal, {
        action: 'token.create',
        entityType: 'credential',
        entityId: id,
        after: { label: label ?? null },
      });
      return { id, token };
    });
  }
}
