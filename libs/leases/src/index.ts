export { LeasesModule } from './leases.module.js';
export { LeasesService, LEASE_RANDOM, type LeaseGrant, type UniformSource } from './leases.service.js';
export { HighlightService, type Highlight } from './highlight.service.js';
export { LeaseGrantAnswer } from './lease.responses.js';
