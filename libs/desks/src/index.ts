export { DesksModule, DeskDirectoryModule } from './desks.module.js';
export { DeskDirectory, DESK_CACHE_MS, type DeskEntry } from './desk-directory.service.js';
export { DesksService, validateSeedTerms, type DeskView } from './desks.service.js';
export { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
