import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { ImportRunner } from './import-runner.service.js';
import { ImportsController } from './imports.controller.js';
import { ImportsService } from './imports.service.js';
import { ReseedService } from './reseed.service.js';

/** HTTP side: upload and status. */
@Module({ controllers: [ImportsController], providers: [ImportsService], exports: [ImportsService] })
export class ImportsModule {}

/** Worker side: reading files into items, recounting seed terms. */
@Module({
  imports: [ModelsCoreModule],
  providers: [ImportRunner, ReseedService],
  exports: [ImportRunner, ReseedService],
})
export class ImportsWorkModule {}
