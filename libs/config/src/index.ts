export {
  parseConfig,
  loadConfig,
  loadConfigOrExit,
  nestLogLevels,
  configToEnv,
  ConfigError,
  CONFIG_VARIABLES,
  nodeArgsFor,
} from './config.js';
export type { AppConfig, DatabaseConfig } from './config.js';
export { APP_CONFIG, ConfigModule } from './config.module.js';
