export { AuditService, type AuditActor, type AuditRecord } from './audit.service.js';
export type { AuditEvent, AuditPageQuery } from './audit.repository.js';
export { AuditModule } from './audit.module.js';
