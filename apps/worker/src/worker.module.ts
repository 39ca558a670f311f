import { Module, type DynamicModule } from '@nestjs/common';
import { ConfigModule, type AppConfig } from '#config';
import { AuditModule } from '#audit';
import { DatabaseModule } from '#database';
import { DemoWorkModule } from '#demo';
import { ImportsWorkModule } from '#imports';
import { createRootLogger, LoggingModule } from '#logging';
import { ModelsWorkModule } from '#models';
import { QueuesModule } from '#queues';
import { ReportsWorkModule } from '#reports';
import { RetentionCoreModule } from '#retention';
import { EscalationWorkModule } from '#verdicts';
import { VocabularyWorkModule } from '#vocabulary';
import { JOB_HANDLERS, PROCESSORS, WorkersService } from './workers.service.js';
import { pauseHook } from './pause-hook.js';
import { WorkerHealthServer } from './health-server.js';

/** The worker process: BullMQ processors, no HTTP. The only place processors are registered. */
@Module({})
export class WorkerModule {
  static forRoot(config: AppConfig): DynamicModule {
    return {
      module: WorkerModule,
      imports: [
        ConfigModule.forRoot(config),
        LoggingModule.forRoot(createRootLogger(config, 'worker')),
        DatabaseModule.forRoot(),
        QueuesModule.forRoot(),
        AuditModule,
        ImportsWorkModule,
        ModelsWorkModule.register({ pause: pauseHook(config) }),
        DemoWorkModule,
        ReportsWorkModule,
        VocabularyWorkModule,
        RetentionCoreModule,
        EscalationWorkModule,
      ],
      providers: [
        ...PROCESSORS,
        { provide: JOB_HANDLERS, inject: PROCESSORS, useFactory: (...handlers: unknown[]) => handlers },
        WorkersService,
        WorkerHealthServer,
      ],
    };
  }
}
