import {
  BadRequestException,
  Controller,
  Get,
  Inject,
  NotFoundException,
  Param,
  ParseIntPipe,
  Query,
  Res,
} from '@nestjs/common';
import type { Response } from 'express';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { Roles, OnDesk } from '#auth';
import { DeskDirectory, type DeskEntity, deskOr404, type ModelVersionEntity, TRIAGE_CALLS } from '#database';
import {
  CoverageAnswer,
  CoveragePreviewAnswer,
  ModelFileAnswer,
  ModelListAnswer,
  ModelVersionAnswer,
  PredictedItemsAnswer,
  type QualityFigures,
} from './model.responses.js';
import { ModelStore } from './model-store.service.js';
import { ModelVersionsRepository } from './model-versions.repository.js';
import { PredictionsService } from './predictions.service.js';
import { ScreeningAnswer } from './screening/screening.responses.js';
import { ScreeningService } from './screening/screening.service.js';
import { ModelTransferService } from './transfer/model-transfer.service.js';

const LANES = ['flagged', 'cleared'] as const;

const READERS = ['supervisor', 'auditor'] as const;

@ApiTags('models')
@Controller('api/desks/:deskId')
export class ModelsController {
  constructor(
    @Inject(ModelVersionsRepository) private readonly repository: ModelVersionsRepository,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(ModelStore) private readonly store: ModelStore,
    @Inject(ScreeningService) private readonly screeningService: ScreeningService,
    @Inject(ModelTransferService) private readonly transfers: ModelTransferService,
  ) {}

  /**
   * Open items flagged (their set holds a watched category), cleared (it
   * holds none) or unscored under the current version, the promise of each
   * watched category in a sentence, what the cleared pile still holds of it,
   * and what flagging by seed terms alone would do.
   */
  @Roles(...READERS)
  @OnDesk()
  @Get('screening')
  @ApiAnswer(ScreeningAnswer)
  async screening(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof ScreeningAnswer>> {
    return this.screeningService.screening(await this.desk(deskId));
  }

  /** Read fresh (not through the directory's short cache): these pages must show the version that is current now. */
  private async desk(deskId: number): Promise<DeskEntity> {
    return deskOr404(deskId, await this.repository.desk(deskId));
  }

  /** Model versions, newest first: counts, quality figures, timings, parent. */
  @Roles(...READERS)
  @OnDesk()
  @Get('models')
  @ApiAnswer(ModelListAnswer)
  async list(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof ModelListAnswer>> {
    const desk = await this.desk(deskId);
    const rows = await this.repository.versions(deskId);
    return {
      currentModelVersion: desk.currentModelVersion,
      models: rows.map((r) => this.summary(r)),
    };
  }

  @Roles(...READERS)
  @OnDesk()
  @Get('models/:version')
  @ApiAnswer(ModelVersionAnswer)
  async one(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('version', ParseIntPipe) version: number,
  ): Promise<Answer<typeof ModelVersionAnswer>> {
    const desk = await this.desk(deskId);
    const row = await this.repository.version(deskId, version);
    if (!row) throw new NotFoundException(`desk ${deskId} has no model version ${version}`);
    const loaded = row.model ? await this.store.load(deskId, version) : null;
    return {
      ...this.summary(row),
      training: { counts: row.training.counts, draws: row.training.draws, items: row.training.itemIds },
      calibration: { counts: row.calibration.counts, draws: row.calibration.draws, items: row.calibration.itemIds },
      thresholds: loaded ? this.predictions.calibrationStatus(desk, loaded) : null,
    };
  }

  /**
   * The version's classifier as a download (`cribra.model-export`, format version 1): categories, featuriser
   * settings, the idf table and the weights, sparse; no texts. It starts another desk (`POST /api/desks` with
   * `startFrom`) or a rehearsal (`cribra rehearse --start-from`).
   */
  @Roles(...READERS)
  @OnDesk()
  @Get('models/:version/model.json')
  @ApiAnswer(ModelFileAnswer, { description: 'the model file, as an attachment' })
  async modelFile(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('version', ParseIntPipe) version: number,
    @Res({ passthrough: true }) res: Response,
  ): Promise<Answer<typeof ModelFileAnswer>> {
    const file = await this.transfers.exportOf(deskId, version);
    res.setHeader('Content-Disposition', `attachment; filename="desk-${deskId}-v${version}.model.json"`);
    // The solver's summary is an interface; the schema reads it as a record.
    return { ...file, classifier: { ...file.classifier, training: { ...file.classifier.training } } };
  }

  private summary(r: ModelVersionEntity) {
    return {
      version: r.version,
      parentVersion: r.parentVersion,
      state: r.state,
      createdAt: r.createdAt,
      publishedAt: r.publishedAt,
      verdictWatermark: r.verdictWatermark,
      trainingCounts: r.training.counts,
      calibrationCounts: r.calibration.counts,
      // Stored as the training service wrote it (qualityFigures); the API tests parse it with the schema.
      metrics: r.metrics as QualityFigures | null,
      timings: r.timings,
      failure: r.failure,
    };
  }

  /** Realized coverage of random draws against the sets shown, per version, per category and over the last 200; the coverage alert. */
  @Roles(...READERS)
  @OnDesk()
  @Get('coverage')
  @ApiAnswer(CoverageAnswer)
  async coverage(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof CoverageAnswer>> {
    return this.predictions.coverage(await this.desk(deskId));
  }

  /** Expected share of sure, ambiguous and unfamiliar calls and mean set size over the pool, for targets 0.50–0.99. */
  @Roles(...READERS)
  @OnDesk()
  @Get('coverage-preview')
  @ApiAnswer(CoveragePreviewAnswer)
  async preview(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof CoveragePreviewAnswer>> {
    return this.predictions.coveragePreview(await this.desk(deskId));
  }

  /** Open items with their current predictions, by item id; filter by call, by a category in the set, by lane. */
  @Roles(...READERS)
  @OnDesk()
  @Get('items')
  @ApiAnswer(PredictedItemsAnswer)
  @ApiQuery({ name: 'call', required: false, enum: TRIAGE_CALLS, description: 'only items with this call' })
  @ApiQuery({ name: 'category', required: false, type: String, description: 'only items whose set holds it' })
  @ApiQuery({
    name: 'lane',
    required: false,
    enum: LANES,
    description: 'flagged: the set holds a watched category; cleared: it holds none',
  })
  @ApiQuery({ name: 'after', required: false, type: String, description: 'the `next` of the previous page' })
  @ApiQuery({ name: 'cursor', required: false, type: String, description: 'the same as `after`' })
  @ApiQuery({ name: 'limit', required: false, type: Number, description: 'items per page, 1–500 (default 50)' })
  async items(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('call') call?: string,
    @Query('category') category?: string,
    @Query('lane') lane?: string,
    @Query('after') after?: string,
    @Query('cursor') cursor?: string,
    @Query('limit') limit?: string,
  ): Promise<Answer<typeof PredictedItemsAnswer>> {
    if (call !== undefined && !(TRIAGE_CALLS as readonly string[]).includes(call))
      throw new BadRequestException(`call: expected one of ${TRIAGE_CALLS.join(', ')}`);
    if (lane !== undefined && !(LANES as readonly string[]).includes(lane))
      throw new BadRequestException(`lane: expected one of ${LANES.join(', ')}`);
    if (after !== undefined && cursor !== undefined)
      throw new BadRequestException('after: give after or cursor, not both');
    for (const [name, value] of [
      ['after', after],
      ['cursor', cursor],
    ] as const)
      if (value !== undefined && !/^\d+$/.test(value))
        throw new BadRequestException(`${name}: expected the next of a previous page`);
    if (limit !== undefined && (!/^\d+$/.test(limit) || Number(limit) < 1 || Number(limit) > 500))
      throw new BadRequestException('limit: expected a whole number from 1 to 500');
    const desk = await this.desk(deskId);
    const entry = (await this.directory.get(deskId))!;
    if (category !== undefined && !entry.categories.some((c) => c.name === category))
      throw new BadRequestException(`category: this desk has ${entry.categories.map((c) => c.name).join(', ')}`);
    const model = await this.predictions.current(desk);
    if (!model) return { modelVersion: null, items: [], next: null, nextCursor: null };
    const want = Number(limit ?? 50);
    const found: Array<{ itemId: number; prediction: ReturnType<PredictionsService['show']> }> = [];
    let next: number | null = null;
    let from = Number(after ?? cursor ?? 0);
    // Sets depend on the current target, so filtering happens here, page by page of stored probabilities.
    outer: for (;;) {
      const rows = await this.repository.openPredictions(deskId, model.version, from, 1000);
      for (const r of rows) {
        const pred = this.predictions.show(desk, model, JSON.parse(r.probabilities) as number[]);
        from = r.itemId;
        if (call !== undefined && pred.call !== call) continue;
        if (category !== undefined && !pred.set.includes(category)) continue;
        if (lane !== undefined && pred.set.some((c) => desk.watch.includes(c)) !== (lane === 'flagged')) continue;
        found.push({ itemId: r.itemId, prediction: pred });
        if (found.length === want) {
          next = from;
          break outer;
        }
      }
      if (rows.length < 1000) break;
    }
    const byId = await this.repository.itemsShown(found.map((f) => f.itemId));
    return {
      modelVersion: model.version,
      items: found.map((f) => ({
        id: f.itemId,
        text: byId.get(f.itemId)?.text,
        externalId: byId.get(f.itemId)?.externalId ?? null,
        source: byId.get(f.itemId)?.source ?? null,
        prediction: f.prediction,
      })),
      next: next === null ? null : String(next),
      nextCursor: next === null ? null : String(next),
    };
  }
}
