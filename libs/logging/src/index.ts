export { createRootLogger } from './root-logger.js';
export { requestIdOf, routeOf, requestLogOptions, requestLogger } from './request-log.js';
export { logJob, type LoggedJob } from './job-log.js';
export { LoggingModule, ROOT_LOGGER } from './logging.module.js';
export { Logger as NestPinoLogger } from 'nestjs-pino';
