import { Global, Inject, Logger, Module, type DynamicModule, type OnApplicationShutdown } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { openDatabase } from './data-source.js';
import { Database } from './database.js';
import { DeskDirectory } from './desk-directory.service.js';

/** Provides the {@link Database}; migrations run when it connects. */
@Global()
@Module({})
export class DatabaseModule implements OnApplicationShutdown {
  constructor(@Inject(Database) private readonly db: Database) {}

  static forRoot(options: { migrate?: boolean; poolSize?: number } = {}): DynamicModule {
    return {
      module: DatabaseModule,
      providers: [
        {
          provide: Database,
          inject: [APP_CONFIG],
          useFactory: async (config: AppConfig) =>
            new Database(
              await openDatabase(config.database, {
                ...options,
                onWait: (message) => new Logger('Database').log(message),
              }),
            ),
        },
        DeskDirectory,
      ],
      exports: [Database, DeskDirectory],
    };
  }

  async onApplicationShutdown(): Promise<void> {
    await this.db.close();
  }
}
