import { Inject, Injectable } from '@nestjs/common';
import type { Redis } from 'ioredis';
import { RateLimiterRedis, RateLimiterRes } from 'rate-limiter-flexible';
import { APP_CONFIG, type AppConfig } from '#config';
import { REDIS } from '#queues';

/** Too many sign-in attempts from this address (for this name, or for any): come back after `retryAfterSeconds`. */
export class SignInLimited extends Error {
  constructor(readonly retryAfterSeconds: number) {
    super(`too many sign-in attempts from this address; try again in ${retryAfterSeconds} s`);
  }
}

/** The attempts could not be counted (Redis does not answer): the sign-in is refused, never let through uncounted. */
export class SignInUncounted extends Error {
  constructor() {
    super('sign-in is unavailable for a moment (the attempt counter does not answer); try again shortly');
  }
}

/** Longest a counter call may take before the sign-in is refused as unavailable. */
const REDIS_TIMEOUT_MS = 2000;
/** Slowest back-off on a name attacked from elsewhere. */
const MAX_DELAY_MS = 3000;

/**
 * Counts sign-in attempts in Redis, atomically and before the password is checked (rate-limiter-flexible's Redis
 * limiter: one Lua script increments a key with its expiry), so several API processes share one count and no burst
 * of parallel attempts gets more checks than the limit. Keys expire with their window: memory stays bounded by the
 * attempts of one window, and the API process holds none of it.
 *
 * - per name and client address: beyond the limit, 429 for that address only;
 * - per client address over all names: beyond the limit, 429 (one address trying many names);
 * - per name over all addresses: beyond the limit each attempt waits, doubling from 100 ms to 3 s, and is then checked
 *   as usual. A lockout here would let anyone lock an account out by guessing wrong from elsewhere; a back-off
 *   slows the guesser while the owner, from their own address, still signs in with the right password.
 */
@Injectable()
export class SignInLimiter {
  private readonly pair: RateLimiterRedis;
  private readonly address: RateLimiterRedis;
  private readonly name: RateLimiterRedis;
  private readonly perName: number;

  constructor(@Inject(REDIS) redis: Redis, @Inject(APP_CONFIG) config: AppConfig) {
    const duration = config.signIn.windowMinutes * 60;
    const make = (what: string, points: number) =>
      new RateLimiterRedis({
        storeClient: redis,
        keyPrefix: `${config.queuePrefix}:sign-in:${what}`,
        points,
        duration,
        rejectIfRedisNotReady: true,
      });
    this.pair = make('name-address', config.signIn.perNameAndAddress);
    this.address = make('address', config.signIn.perAddress);
    this.name = make('name', config.signIn.perName);
    this.perName = config.signIn.perName;
  }

  /**
   * Counts one attempt of `name` from `address`. Throws {@link SignInLimited} when this address is over a limit,
   * {@link SignInUncounted} when Redis does not answer; otherwise answers how long to wait before checking the
   * password (0 unless the name is over its own limit).
   */
  async attempt(name: string, address: string): Promise<{ delayMs: number }> {
    await this.consume(this.address, address);
    await this.consume(this.pair, pairKey(name, address));
    try {
      await this.call(this.name.consume(name));
      return { delayMs: 0 };
    } catch (e) {
      if (!(e instanceof RateLimiterRes)) throw new SignInUncounted();
      const over = e.consumedPoints - this.perName;
      return { delayMs: Math.min(MAX_DELAY_MS, 100 * 2 ** Math.min(over - 1, 10)) };
    }
  }

  /** A successful sign-in clears its name-and-address count and gives its attempt back to the address and name. */
  async succeeded(name: string, address: string): Promise<void> {
    await Promise.all([
      this.call(this.pair.delete(pairKey(name, address))),
      this.call(this.address.reward(address, 1)),
      this.call(this.name.reward(name, 1)),
    ]).catch(() => undefined);
  }

  private async consume(limiter: RateLimiterRedis, key: string): Promise<void> {
    try {
      await this.call(limiter.consume(key));
    } catch (e) {
      if (e instanceof RateLimiterRes) throw new SignInLimited(Math.max(1, Math.ceil(e.msBeforeNext / 1000)));
      throw new SignInUncounted();
    }
  }

  /** A counter call, or a rejection after {@link REDIS_TIMEOUT_MS}. */
  private call<T>(p: Promise<T>): Promise<T> {
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error('sign-in counter timed out')), REDIS_TIMEOUT_MS);
    });
    return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
  }
}

/** One key per name and address. */
function pairKey(name: string, address: string): string {
  return `${address}|${name}`;
}
