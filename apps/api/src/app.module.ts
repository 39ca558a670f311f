import { Module, type DynamicModule } from '@nestjs/common';
import { ConfigModule, type AppConfig } from '#config';
import { AuditModule } from '#audit';
import { AuthModule } from '#auth';
import { DatabaseModule } from '#database';
import { DemoModule } from '#demo';
import { DesksModule } from '#desks';
import { ImportsModule } from '#imports';
import { LeasesModule } from '#leases';
import { createRootLogger, LoggingModule } from '#logging';
import { ModelsModule } from '#models';
import { QueuesModule, REQUEST_REDIS_TIMEOUT_MS } from '#queues';
import { ReportsModule } from '#reports';
import { RetentionModule } from '#retention';
import { VerdictsModule } from '#verdicts';
import { VocabularyModule } from '#vocabulary';
import { AuditController } from './audit.controller.js';
import { HealthController } from './health.controller.js';
import { ReadinessService } from './readiness.service.js';
import { MetricsRepository } from './metrics/metrics.repository.js';
import { ServiceMetrics } from './metrics/service-metrics.js';

/** The HTTP application: every route of the API. It registers no queue processors. */
@Module({})
export class ApiModule {
  static forRoot(config: AppConfig): DynamicModule {
    return {
      module: ApiModule,
      imports: [
        ConfigModule.forRoot(config),
        LoggingModule.forRoot(createRootLogger(config, 'api')),
        DatabaseModule.forRoot(),
        QueuesModule.forRoot({ commandTimeoutMs: REQUEST_REDIS_TIMEOUT_MS }),
        AuditModule,
        AuthModule,
        DesksModule,
        ImportsModule,
        LeasesModule,
        VerdictsModule,
        ModelsModule,
        DemoModule,
        ReportsModule,
        VocabularyModule,
        RetentionModule,
      ],
      controllers: [HealthController, AuditController],
      providers: [ServiceMetrics, MetricsRepository, ReadinessService],
    };
  }
}
