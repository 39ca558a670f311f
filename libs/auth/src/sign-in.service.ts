import { Inject, Injectable, Logger } from '@nestjs/common';
import { AuthError, AuthService } from './auth.service.js';
import type { Principal } from './principal.js';
import { SignInLimiter } from './sign-in-limiter.js';

/**
 * Sign-in with a name and a password, for the HTTP API: counts the attempt first ({@link SignInLimiter}), waits
 * out a back-off when the name is under attack from elsewhere, then checks the password. Unknown names cost one
 * scrypt like known ones (see {@link AuthService.checkPassword}). Every checked attempt, refused or not, goes into
 * the audit trail with the name, the client address and the outcome; refusals are logged too.
 */
@Injectable()
export class SignInService {
  private readonly logger = new Logger('SignIn');

  constructor(
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(SignInLimiter) private readonly limiter: SignInLimiter,
  ) {}

  async signIn(
    name: string,
    password: string,
    address: string,
  ): Promise<{ secret: string; principal: Principal; expiresAt: Date }> {
    const counted = name.normalize('NFKC').toLowerCase();
    const { delayMs } = await this.limiter.attempt(counted, address).catch((e: unknown) => {
      this.logger.warn(`sign-in of ${JSON.stringify(name)} from ${address} not checked: ${(e as Error).message}`);
      throw e;
    });
    if (delayMs > 0) await new Promise((r) => setTimeout(r, delayMs));
    const checked = await this.auth.checkPassword(name, password);
    if (!checked.user) {
      this.logger.warn(`sign-in refused for ${JSON.stringify(name)} from ${address}: ${checked.reason}`);
      await this.auth.recordRefusal(name, checked.userId, address, checked.reason);
      throw new AuthError('wrong name or password');
    }
    await this.limiter.succeeded(counted, address);
    return this.auth.startSession(checked.user, address);
  }
}
