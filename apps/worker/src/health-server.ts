import { createServer, type Server } from 'node:http';
import { Inject, Injectable, Logger, type OnApplicationBootstrap, type OnApplicationShutdown } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database } from '#database';
import { checkDependencies, JobQueueService } from '#queues';
import { WorkersService } from './workers.service.js';

/**
 * The worker's own health answers, for an orchestrator's probes (only when WORKER_HEALTH_PORT is set):
 *
 * - `GET /healthz`: 200 while the process answers and every one of its queue workers runs (a liveness probe; it does
 *   not look at Redis or the database, so that an outage of either does not get healthy workers restarted);
 * - `GET /readyz`: 200 when the database and Redis answer, each within 0.4 s, else 503 naming which does not
 *   (the same rule as the API's `/readyz`).
 *
 * Plain `node:http`, bound to HOST: it has no authentication and says nothing but these states.
 */
@Injectable()
export class WorkerHealthServer implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('WorkerHealth');
  private server: Server | null = null;

  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(Database) private readonly db: Database,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(WorkersService) private readonly workers: WorkersService,
  ) {}

  async onApplicationBootstrap(): Promise<void> {
    const port = this.config.workerHealthPort;
    if (port === null) return;
    const server = createServer((req, res) => {
      const send = (status: number, body: object) => {
        res.writeHead(status, { 'content-type': 'application/json', 'cache-control': 'no-store' });
        res.end(JSON.stringify(body));
      };
      const path = (req.url ?? '/').split('?')[0];
      if (req.method !== 'GET') {
        send(405, { statusCode: 405, message: 'only GET' });
        return;
      }
      if (path === '/healthz') {
        const { queues, running } = this.workers.state();
        const alive = running === queues;
        send(alive ? 200 : 503, { status: alive ? 'ok' : 'stopping', pid: process.pid, queues, running });
        return;
      }
      if (path === '/readyz') {
        void checkDependencies(this.db, this.jobs).then(({ database, redis }) =>
          database && redis
            ? send(200, { status: 'ready', database, redis })
            : send(503, { status: 'not ready', database, redis }),
        );
        return;
      }
      send(404, { statusCode: 404, message: 'GET /healthz or /readyz' });
    });
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(port, this.config.host, () => resolve());
    });
    this.server = server;
    this.logger.log(`health answers on http://${this.config.host}:${port}/healthz and /readyz`);
  }

  async onApplicationShutdown(): Promise<void> {
    const server = this.server;
    this.server = null;
    if (server) await new Promise<void>((resolve) => server.close(() => resolve()));
  }
}
