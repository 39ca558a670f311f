import { Global, Module, type DynamicModule } from '@nestjs/common';
import { LoggerModule } from 'nestjs-pino';
import type { Logger } from 'pino';

/** Injection token of the process's root pino logger (see {@link createRootLogger}). */
export const ROOT_LOGGER = Symbol('ROOT_LOGGER');

/**
 * nestjs-pino around the process's root logger: Nest's own messages go through it (`app.useLogger(app.get(Logger))`).
 * An HTTP application mounts {@link requestLogger} in front of everything (so that paths no controller serves get
 * their line too); nestjs-pino then reuses the request's logger, so a message written while a request runs carries
 * its request id.
 */
@Global()
@Module({})
export class LoggingModule {
  static forRoot(root: Logger): DynamicModule {
    return {
      module: LoggingModule,
      imports: [LoggerModule.forRoot({ pinoHttp: { logger: root }, useExisting: true })],
      providers: [{ provide: ROOT_LOGGER, useValue: root }],
      exports: [ROOT_LOGGER, LoggerModule],
    };
  }
}
