import { Inject, Injectable } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, ROLES, type Role, type UserEntity } from '#database';
import { AuditService, type AuditActor } from '#audit';
import { AuthRepository } from './auth.repository.js';
import type { Principal } from './principal.js';
import { passwordProblem } from './passwords/password-policy.js';
import { hashPassword, newSecret, secretHash, verifyPassword } from './secrets.js';

/** A request the accounts cannot carry out: bad input (400), or a refused sign-in (401). */
export class AuthError extends Error {}
/** No such account or credential of the caller's (404). */
export class AuthNotFound extends AuthError {}
/** The change would break a rule of the accounts, e.g. leave no admin (409). */
export class AuthConflict extends AuthError {}
/** The caller's role may not ask for this (403). */
export class AuthForbidden extends AuthError {}

const DAY_MS = 86_400_000;

/** How long an authentication answer is reused within one process. */
export const AUTH_CACHE_MS = 3000;
/** How often a credential's last-used time is written (it is read to the minute). */
const LAST_USED_EVERY_MS = 60_000;

let dummy: Promise<string> | undefined;
/** A hash to check unknown names against, so that they cost one scrypt like known ones. */
function dummyHash(): Promise<string> {
  dummy ??= hashPassword('no account has this password; it only spends the time a check takes');
  return dummy;
}

/** Users, passwords, sessions and personal API tokens. */
@Injectable()
export class AuthService {
  private readonly cache = new Map<string, { principal: Principal | null; until: number; userId: number | null }>();
  private readonly accounts: AuthRepository;

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {
    this.accounts = new AuthRepository(db);
  }

  async createUser(
    actor: AuditActor,
    input: { name: string; role: Role; password?: string },
  ): Promise<{ user: UserEntity; token: string }> {
    const name = input.name.trim();
    if (!/^[\p{L}\p{N}_.@-]{1,100}$/u.test(name)) throw new AuthError('name: 1–100 letters, digits, or _ . @ -');
    if (!ROLES.includes(input.role)) throw new AuthError(`role: expected one of ${ROLES.join(', ')}`);
    const problem = input.password !== undefined ? passwordProblem(input.password, { userName: name }) : null;
    if (problem) throw new AuthError(problem);
    const passwordHash = input.password !== undefined ? await hashPassword(input.password) : null;
    return this.db.write(async (m) => {
      if (await this.accounts.userByName(m, name))
        throw new AuthConflict(`a user named ${JSON.stringify(name)} exists already`);
      const user = await this.accounts.createUser(m, { name, role: input.role, passwordHash, createdAt: new Date() });
      const token = newSecret('token');
      await this.accounts.insertCredential(m, {
        userId: user.id,
        kind: 'token',
        secretHash: secretHash(token),
        label: 'first token',
        createdAt: new Date(),
        expiresAt: new Date(Date.now() + this.config.tokenDays * DAY_MS),
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
    // System accounts (the archive's) are nobody's to manage: they hold imported labels and never sign in.
    return this.accounts.people();
  }

  /**
   * Changes an account's role, disabled flag or password. A new password or a disabled account revokes every session
   * and token of the account at once. The last enabled admin can be neither demoted nor disabled.
   */
  async updateUser(
    actor: AuditActor,
    id: number,
    change: { role?: Role; disabled?: boolean; password?: string },
  ): Promise<UserEntity> {
    const passwordHash = change.password !== undefined ? await this.newPasswordHash(id, change.password) : undefined;
    return this.db.write(async (m) => {
      const user = await this.accounts.userById(m, id);
      if (!user || user.isSystem) throw new AuthNotFound(`no user ${id}`);
      const before = { role: user.role, disabled: user.disabled };
      if (change.role !== undefined) user.role = change.role;
      if (change.disabled !== undefined) user.disabled = change.disabled;
      if (passwordHash !== undefined) user.passwordHash = passwordHash;
      const stillAdmin = user.role === 'admin' && !user.disabled;
      if (before.role === 'admin' && !before.disabled && !stillAdmin) {
        const others = await this.accounts.enabledAdmins(m);
        // `others` still counts this user: the update is not written yet.
        if (others <= 1)
          throw new AuthConflict(
            `${user.name} is the last enabled admin: make another account admin before demoting or disabling this one`,
          );
      }
      await this.accounts.updateUser(m, id, {
        role: user.role,
        disabled: user.disabled,
        ...(passwordHash ? { passwordHash } : {}),
      });
      const revoke = change.disabled === true || passwordHash !== undefined;
      const revoked = revoke ? await this.accounts.revokeAllOf(m, id, new Date()) : 0;
      this.forgetUser(id);
      await this.audit.record(m, actor, {
        action: 'user.update',
        entityType: 'user',
        entityId: id,
        before,
        after: {
          role: user.role,
          disabled: user.disabled,
          passwordChanged: passwordHash !== undefined,
          ...(revoke ? { credentialsRevoked: revoked } : {}),
        },
      });
      return user;
    });
  }

  private async newPasswordHash(userId: number, password: string): Promise<string> {
    const user = await this.accounts.userById(null, userId);
    const problem = passwordProblem(password, { userName: user?.name });
    if (problem) throw new AuthError(problem);
    return hashPassword(password);
  }

  /**
   * Checks a name and password. An unknown name, a disabled account or one without a password costs one scrypt
   * against a fixed hash all the same, so that the time of the answer does not tell which names exist.
   */
  async checkPassword(
    name: string,
    password: string,
  ): Promise<
    | { user: UserEntity; userId: number; reason: null }
    | { user: null; userId: number | null; reason: 'unknown name' | 'disabled' | 'no password' | 'wrong password' }
  > {
    const user = await this.accounts.userByName(null, name);
    const usable = user && !user.disabled && user.passwordHash !== null ? user : null;
    const ok = await verifyPassword(password, usable ? usable.passwordHash! : await dummyHash());
    if (usable && ok) return { user: usable, userId: usable.id, reason: null };
    const reason = !user
      ? 'unknown name'
      : user.disabled
        ? 'disabled'
        : user.passwordHash === null
          ? 'no password'
          : 'wrong password';
    return { user: null, userId: user?.id ?? null, reason };
  }

  /** Writes a refused sign-in into the audit trail: the name tried, the client address and why. */
  async recordRefusal(name: string, userId: number | null, address: string, reason: string): Promise<void> {
    await this.db.write((m) =>
      this.audit.record(
        m,
        { id: userId, name: name.slice(0, 100) },
        {
          action: 'session.refused',
          entityType: 'user',
          entityId: userId ?? name.slice(0, 100),
          after: { name: name.slice(0, 100), address, outcome: reason },
        },
      ),
    );
  }

  /** A new browser session for a user whose password was checked; audited with the client address. */
  async startSession(
    user: UserEntity,
    address: string,
  ): Promise<{ secret: string; principal: Principal; expiresAt: Date }> {
    const secret = newSecret('session');
    const expiresAt = new Date(Date.now() + this.config.sessionHours * 3600_000);
    await this.db.write(async (m) => {
      await this.accounts.insertCredential(m, {
        userId: user.id,
        kind: 'session',
        secretHash: secretHash(secret),
        label: null,
        createdAt: new Date(),
        expiresAt,
      });
      await this.audit.record(
        m,
        { id: user.id, name: user.name },
        {
          action: 'session.start',
          entityType: 'user',
          entityId: user.id,
          after: { address, outcome: 'signed in' },
        },
      );
    });
    return { secret, principal: { id: user.id, name: user.name, role: user.role, via: 'session' }, expiresAt };
  }

  /** Ends the session or revokes the token that authenticated the request; audited. */
  async logout(secret: string): Promise<void> {
    await this.db.write(async (m) => {
      const cred = await this.accounts.credentialBySecretHash(m, secretHash(secret));
      if (!cred || cred.revokedAt) return;
      await this.accounts.revoke(m, cred.id, new Date());
      this.cache.delete(cred.secretHash);
      const user = await this.accounts.userById(m, cred.userId);
      await this.audit.record(
        m,
        { id: cred.userId, name: user?.name ?? '?' },
        cred.kind === 'session'
          ? { action: 'session.end', entityType: 'user', entityId: cred.userId }
          : { action: 'token.revoke', entityType: 'credential', entityId: cred.id, after: { by: 'sign-out' } },
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
    const row = await this.accounts.credentialOwner(hash);
    const valid = row && !row.revoked && !row.disabled && !(row.expiresAt && row.expiresAt.getTime() <= now);
    const principal: Principal | null = valid
      ? { id: row.userId, name: row.name, role: row.role, via: row.kind }
      : null;
    if (this.cache.size > 10_000) this.cache.clear();
    this.cache.set(hash, { principal, until: now + AUTH_CACHE_MS, userId: principal?.id ?? null });
    if (principal) {
      const last = row!.lastUsedAt;
      if (!last || now - last.getTime() > LAST_USED_EVERY_MS) this.touch(row!.credentialId, new Date(now));
    }
    return principal;
  }

  /** Records when a credential was last used, at most every {@link LAST_USED_EVERY_MS}; off the request's path. */
  private touch(credentialId: number, at: Date): void {
    void this.accounts.touch(credentialId, at).catch(() => undefined);
  }

  private forgetUser(userId: number): void {
    for (const [k, v] of this.cache) if (v.userId === userId) this.cache.delete(k);
  }

  /**
   * A new personal API token for the user; the secret is returned once and stored hashed. It expires after
   * `days` (the configured default when not given); only an admin's may never expire.
   */
  async createToken(
    principal: Principal,
    options: { name?: string; days?: number; never?: boolean },
  ): Promise<{ id: number; token: string; name: string | null; expiresAt: Date | null }> {
    if (options.never && principal.role !== 'admin')
      throw new AuthForbidden('only an admin may make a token that never expires; give days instead');
    const token = newSecret('token');
    const expiresAt = options.never ? null : new Date(Date.now() + (options.days ?? this.config.tokenDays) * DAY_MS);
    const name = options.name ?? null;
    return this.db.write(async (m) => {
      const id = await this.accounts.insertCredential(m, {
        userId: principal.id,
        kind: 'token',
        secretHash: secretHash(token),
        label: name,
        createdAt: new Date(),
        expiresAt,
      });
      await this.audit.record(m, principal, {
        action: 'token.create',
        entityType: 'credential',
        entityId: id,
        after: { name, expiresAt: expiresAt?.toISOString() ?? 'never' },
      });
      return { id, token, name, expiresAt };
    });
  }

  /** The user's own tokens that are not revoked, newest first (expired ones say so). */
  async listTokens(principal: Principal): Promise<
    Array<{
      id: number;
      name: string | null;
      createdAt: Date;
      expiresAt: Date | null;
      lastUsedAt: Date | null;
      expired: boolean;
    }>
  > {
    const rows = await this.accounts.liveTokens(principal.id);
    const now = Date.now();
    return rows.map((r) => ({
      id: r.id,
      name: r.label,
      createdAt: r.createdAt,
      expiresAt: r.expiresAt,
      lastUsedAt: r.lastUsedAt,
      expired: r.expiresAt !== null && r.expiresAt.getTime() <= now,
    }));
  }

  /** Revokes one of the user's own tokens; {@link AuthNotFound} for another's, an unknown or a revoked one. */
  async revokeToken(principal: Principal, id: number): Promise<void> {
    await this.db.write(async (m) => {
      const cred = await this.accounts.liveToken(m, principal.id, id);
      if (!cred) throw new AuthNotFound(`you have no live token ${id}`);
      await this.accounts.revoke(m, id, new Date());
      this.cache.delete(cred.secretHash);
      await this.audit.record(m, principal, {
        action: 'token.revoke',
        entityType: 'credential',
        entityId: id,
        after: { name: cred.label },
      });
    });
  }
}
