import { Inject, Injectable, Logger, type OnModuleDestroy } from '@nestjs/common';
import type { Redis } from 'ioredis';
import { AuthError, AuthService, type Principal } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, DeskDirectory, UserEntity } from '#database';
import { createRng } from '#learning';
import { LeasesService } from '#leases';
import { REDIS, type SimulateReviewerPayload } from '#queues';
import { VerdictsService } from '#verdicts';
import { DemoDeskService } from './demo-desk.service.js';
import { readingPauseMs, simulatedAnswer } from './pool/index.js';
import type { SimulationOutcome } from './simulation.service.js';
import { simulationStopKey } from './stop-signal.js';
import { Conflict } from '#errors';

/** The account the simulated reviewer works under: a reviewer without a password, made on first use. */
export const SIMULATED_REVIEWER = 'simulated-reviewer';

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * The demo's simulated reviewer. It works a desk like a person, through the
 * same services a reviewer's requests reach: it leases the next item, pauses
 * as if reading, and answers the post's hidden category (now and then wrongly,
 * rarely abstaining), with every verdict marked simulated.
 */
@Injectable()
export class SimulatedReviewerService implements OnModuleDestroy {
  private readonly logger = new Logger('SimulatedReviewer');
  private closing = false;
  private readonly runs = new Set<Promise<unknown>>();

  constructor(
    @Inject(LeasesService) private readonly leases: LeasesService,
    @Inject(VerdictsService) private readonly verdicts: VerdictsService,
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(DemoDeskService) private readonly demoDesks: DemoDeskService,
    @Inject(REDIS) private readonly redis: Redis,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /**
   * Works the desk until `until`, a stop request, or an empty queue.
   * `report` receives the running verdict count; `done` is the count of an
   * earlier attempt of the same run (a retried job goes on counting).
   */
  run(
    payload: SimulateReviewerPayload,
    report: (verdicts: number) => Promise<unknown>,
    done = 0,
  ): Promise<SimulationOutcome> {
    const work = this.work(payload, report, done);
    this.runs.add(work);
    return work.finally(() => this.runs.delete(work));
  }

  /** At shutdown, runs end after their current item; the job is retried by the next worker until its end time. */
  async onModuleDestroy(): Promise<void> {
    this.closing = true;
    await Promise.allSettled([...this.runs]);
  }

  private async work(
    payload: SimulateReviewerPayload,
    report: (verdicts: number) => Promise<unknown>,
    done: number,
  ): Promise<SimulationOutcome> {
    const { deskId, until } = payload;
    const availability = await this.demoDesks.availability(deskId);
    if (!availability.available)
      throw new Conflict(availability.reason ?? 'this desk cannot have a simulated reviewer');
    const categories = (await this.directory.get(deskId))!.categories.map((c) => c.name);
    const reviewer = await this.account();
    // Seeded by the run: its pauses, mistakes and abstentions can be replayed.
    const rng = createRng((payload.startedAt % 2 ** 32) ^ Math.imul(deskId, 0x9e3779b1));
    const stopKey = simulationStopKey(this.config.queuePrefix, deskId);
    let verdicts = done;
    const stopRequested = async () => (await this.redis.exists(stopKey)) === 1;
    for (;;) {
      if (this.closing) throw new Error('the worker is shutting down; the run goes on in the next worker');
      if (await stopRequested()) {
        await this.redis.del(stopKey);
        return { verdicts, stopped: true };
      }
      if (Date.now() >= until) return { verdicts, stopped: false };
      const grant = await this.leases.lease(reviewer, deskId);
      if (!grant) return { verdicts, stopped: false, detail: 'nothing left to serve: every item has a verdict' };
      const truth = this.demoDesks.truth(grant.item.externalId);
      if (truth === null) {
        await this.leases.giveBack(reviewer, grant.lease.id);
        throw new Conflict(`item ${grant.item.id} is not a generated demo post`);
      }
      const pause = readingPauseMs(rng);
      await sleep(pause);
      // onModuleDestroy may set `closing` during the sleep; the checker still holds the loop's first check of it.
      // eslint-disable-next-line @typescript-eslint/no-unnecessary-condition -- set by onModuleDestroy meanwhile
      if (this.closing || (await stopRequested())) {
        // Hand the item back rather than answer it after being told to stop.
        await this.leases.giveBack(reviewer, grant.lease.id);
        continue;
      }
      const answer = simulatedAnswer(truth, categories, rng);
      try {
        await this.verdicts.submit(
          reviewer,
          deskId,
          {
            leaseId: grant.lease.id,
            itemId: grant.item.id,
            clientId: `simulated-${grant.lease.id}`,
            elapsedMs: pause,
            ...answer,
          },
          { simulated: true },
        );
      } catch (e) {
        // The lease ran out and someone else took the item: as for a person, the answer is simply not recorded.
        if (e instanceof Conflict) continue;
        throw e;
      }
      verdicts++;
      await report(verdicts);
    }
  }

  /** The simulated reviewer's account, created the first time it is needed. */
  private async account(): Promise<Principal> {
    const find = () => this.db.manager.findOneBy(UserEntity, { name: SIMULATED_REVIEWER });
    let user = await find();
    if (!user) {
      try {
        user = (await this.auth.createUser({ id: null, name: 'demo' }, { name: SIMULATED_REVIEWER, role: 'reviewer' }))
          .user;
        this.logger.log(`created the account ${SIMULATED_REVIEWER}`);
      } catch (e) {
        // Another worker made it at the same moment.
        if (!(e instanceof AuthError)) throw e;
        user = await find();
      }
    }
    if (!user || user.role !== 'reviewer' || user.disabled)
      throw new Conflict(`the account ${SIMULATED_REVIEWER} exists but is not an active reviewer`);
    return { id: user.id, name: user.name, role: 'reviewer', via: 'token' };
  }
}
