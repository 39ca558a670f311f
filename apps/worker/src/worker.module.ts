import { Module, type DynamicModule } from '@nestjs/common';
import { ConfigModule, type AppConfig } from '#config';
import { AuditModule } from '#audit';
import { DatabaseModule } from '#database';
import { ImportsWorkModule } from '#imports';
import { QueuesModule } from '#queues';
import { ImportFileProcessor, ReseedDeskProcessor } from './import.processor.js';
import { JOB_HANDLERS, PROCESSORS, WorkersService } from './workers.service.js';

/** The worker process: BullMQ processors, no HTTP. The only place processors are registered. */
@Module({})
export class WorkerModule {
  static forRoot(config: AppConfig): DynamicModule {
    return {
      module: WorkerModule,
      imports: [ConfigModule.forRoot(config), DatabaseModule.forRoot(), QueuesModule, AuditModule, ImportsWorkModule],
      providers: [
        ...PROCESSORS,
        { provide: JOB_HANDLERS, inject: [ImportFileProcessor, ReseedDeskProcessor], useFactory: (...handlers: unknown[]) => handlers },
        WorkersService,
      ],
    };
  }
}
