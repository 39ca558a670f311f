export { ImportsModule, ImportsWorkModule } from './imports.module.js';
export { ImportsService, uploadPath, type ImportView } from './imports.service.js';
export { ImportRunner } from './import-runner.service.js';
export { ReseedService } from './reseed.service.js';
export * from './parsing/index.js';
