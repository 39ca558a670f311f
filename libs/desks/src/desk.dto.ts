import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { Transform, Type } from 'class-transformer';
import {
  IsBoolean,
  ArrayMaxSize,
  ArrayMinSize,
  ArrayUnique,
  IsArray,
  IsIn,
  IsInt,
  IsNumber,
  IsObject,
  IsOptional,
  IsString,
  Length,
  Max,
  Min,
  NotContains,
  ValidateNested,
} from 'class-validator';
import { CALIBRATION_MODES, SCORES, STRATEGIES, type CalibrationMode, type ScoreKind, type Strategy } from '#database';

const trimAll = ({ value }: { value: unknown }) =>
  Array.isArray(value) ? value.map((v: unknown) => (typeof v === 'string' ? v.trim() : v)) : value;

/** Another desk's model version to start from (the caller must be its supervisor or auditor). */
export class StartFromDto {
  @ApiProperty({ example: 1 }) @IsInt() @Min(1) deskId!: number;
  @ApiProperty({ example: 3 }) @IsInt() @Min(1) version!: number;
}

export class CreateDeskDto {
  @ApiProperty({ example: 'Mossbank Commons reports' }) @IsString() @Length(1, 200) name!: string;

  @ApiProperty({ type: [String], minItems: 2, maxItems: 20, example: ['threat', 'harassment', 'ok'] })
  @Transform(trimAll)
  @IsArray()
  @ArrayMinSize(2)
  @ArrayMaxSize(20)
  @ArrayUnique()
  @IsString({ each: true })
  @Length(1, 100, { each: true })
  @NotContains('\n', { each: true })
  categories!: string[];

  @ApiPropertyOptional({
    type: 'object',
    additionalProperties: { type: 'array', items: { type: 'string' } },
    example: { threat: ['hurt you', 'watch your back'] },
  })
  @IsOptional()
  @IsObject()
  seedTerms?: Record<string, string[]>;

  @ApiPropertyOptional({ minimum: 0.5, maximum: 0.999, default: 0.9 })
  @IsOptional()
  @IsNumber()
  @Min(0.5)
  @Max(0.999)
  coverageTarget?: number;
  /** Watched categories: an open item whose prediction set holds one is flagged, else cleared. */
  @ApiPropertyOptional({ type: [String], maxItems: 20, example: ['threat'] })
  @IsOptional()
  @Transform(trimAll)
  @IsArray()
  @ArrayMaxSize(20)
  @ArrayUnique()
  @IsString({ each: true })
  watch?: string[];
  /** A coverage target per category name (0.5–0.999); the others use coverageTarget. Replaces the whole map. */
  @ApiPropertyOptional({
    type: 'object',
    additionalProperties: { type: 'number', minimum: 0.5, maximum: 0.999 },
    example: { threat: 0.98 },
  })
  @IsOptional()
  @IsObject()
  coverageTargets?: Record<string, number>;
  /** Null: expected coverage; else the probability over the calibration draws that coverage reaches each target. */
  @ApiPropertyOptional({ type: Number, nullable: true, minimum: 0.5, maximum: 0.999, default: null })
  @IsOptional()
  @IsNumber()
  @Min(0.5)
  @Max(0.999)
  confidence?: number | null;
  @ApiPropertyOptional({ enum: CALIBRATION_MODES, default: 'per-category' })
  @IsOptional()
  @IsIn(CALIBRATION_MODES)
  calibration?: CalibrationMode;
  @ApiPropertyOptional({ minimum: 0, maximum: 1, default: 0.2 })
  @IsOptional()
  @IsNumber()
  @Min(0)
  @Max(1)
  randomShare?: number;
  /**
   * Share of leases drawn from the review lane (flagged items, highest probability of a watched category first) once
   * a version exists and a category is watched; randomShare + screenShare may not exceed 1. Default 0.5, or what the
   * random share leaves when that is less.
   */
  @ApiPropertyOptional({ minimum: 0, maximum: 1, default: 0.5 })
  @IsOptional()
  @IsNumber()
  @Min(0)
  @Max(1)
  screenShare?: number;
  /** Share of decided items served again to a different reviewer, for agreement figures. */
  @ApiPropertyOptional({ minimum: 0, maximum: 1, default: 0.1 })
  @IsOptional()
  @IsNumber()
  @Min(0)
  @Max(1)
  secondOpinionShare?: number;
  /**
   * Whether second opinions of the demo's simulated verdicts are served to people. Off by default: a person asking
   * for work gets first draws and second opinions of people's verdicts.
   */
  @ApiPropertyOptional({ default: false })
  @IsOptional()
  @IsBoolean()
  serveSimulatedSecondOpinions?: boolean;
  @ApiPropertyOptional({ minimum: 30, maximum: 86400, default: 600 })
  @IsOptional()
  @IsInt()
  @Min(30)
  @Max(86400)
  leaseSeconds?: number;
  @ApiPropertyOptional({ enum: STRATEGIES, default: 'entropy' })
  @IsOptional()
  @IsIn(STRATEGIES)
  strategy?: Strategy;
  @ApiPropertyOptional({ enum: SCORES, default: 'lac' })
  @IsOptional()
  @IsIn(SCORES)
  score?: ScoreKind;
  @ApiPropertyOptional({ minimum: 1, maximum: 100000, default: 10 })
  @IsOptional()
  @IsInt()
  @Min(1)
  @Max(100000)
  retrainEvery?: number;
  @ApiPropertyOptional({ minimum: 1, maximum: 86400, default: 30 })
  @IsOptional()
  @IsInt()
  @Min(1)
  @Max(86400)
  retrainAfterSeconds?: number;
  /**
   * Start from another desk's model version: the new desk's first version is its classifier (categories matched by
   * name), scored over the pool as items arrive, with no calibration until the desk's own random verdicts come.
   */
  @ApiPropertyOptional({ type: StartFromDto })
  @IsOptional()
  @IsObject()
  @ValidateNested()
  @Type(() => StartFromDto)
  startFrom?: StartFromDto;
}

export class UpdateDeskDto {
  @ApiPropertyOptional() @IsOptional() @IsString() @Length(1, 200) name?: string;

  /**
   * Retention periods in days (1–3650; null keeps): the members given replace the current ones, `categories` as a
   * whole map.
   */
  @ApiPropertyOptional({
    type: 'object',
    properties: {
      decidedAfterDays: { type: 'integer', minimum: 1, maximum: 3650, nullable: true },
      categories: { type: 'object', additionalProperties: { type: 'integer', minimum: 1, maximum: 3650 } },
      openAfterDays: { type: 'integer', minimum: 1, maximum: 3650, nullable: true },
    },
    example: { decidedAfterDays: 365, categories: { ok: 30, threat: 1095 }, openAfterDays: 180 },
  })
  @IsOptional()
  @IsObject()
  retention?: Record<string, unknown>;

  /** The full new list. Categories may be added; one a verdict uses may not be removed or renamed. */
  @ApiPropertyOptional({ type: [String], minItems: 2, maxItems: 20 })
  @IsOptional()
  @Transform(trimAll)
  @IsArray()
  @ArrayMinSize(2)
  @ArrayMaxSize(20)
  @ArrayUnique()
  @IsString({ each: true })
  @Length(1, 100, { each: true })
  categories?: string[];

  @ApiPropertyOptional({ type: 'object', additionalProperties: { type: 'array', items: { type: 'string' } } })
  @IsOptional()
  @IsObject()
  seedTerms?: Record<string, string[]>;
  @ApiPropertyOptional({ minimum: 0.5, maximum: 0.999 })
  @IsOptional()
  @IsNumber()
  @Min(0.5)
  @Max(0.999)
  coverageTarget?: number;
  /** Watched categories: an open item whose prediction set holds one is flagged, else cleared. */
  @ApiPropertyOptional({ type: [String], maxItems: 20, example: ['threat'] })
  @IsOptional()
  @Transform(trimAll)
  @IsArray()
  @ArrayMaxSize(20)
  @ArrayUnique()
  @IsString({ each: true })
  watch?: string[];
  /** A coverage target per category name (0.5–0.999); the others use coverageTarget. Replaces the whole map. */
  @ApiPropertyOptional({
    type: 'object',
    additionalProperties: { type: 'number', minimum: 0.5, maximum: 0.999 },
    example: { threat: 0.98 },
  })
  @IsOptional()
  @IsObject()
  coverageTargets?: Record<string, number>;
  /** Null: expected coverage; else the probability over the calibration draws that coverage reaches each target. */
  @ApiPropertyOptional({ type: Number, nullable: true, minimum: 0.5, maximum: 0.999, default: null })
  @IsOptional()
  @IsNumber()
  @Min(0.5)
  @Max(0.999)
  confidence?: number | null;
  @ApiPropertyOptional({ enum: CALIBRATION_MODES })
  @IsOptional()
  @IsIn(CALIBRATION_MODES)
  calibration?: CalibrationMode;
  @ApiPropertyOptional({ minimum: 0, maximum: 1 }) @IsOptional() @IsNumber() @Min(0) @Max(1) randomShare?: number;
  /** Share of leases drawn from the review lane once a version exists and a category is watched. */
  @ApiPropertyOptional({ minimum: 0, maximum: 1 }) @IsOptional() @IsNumber() @Min(0) @Max(1) screenShare?: number;
  @ApiPropertyOptional({ minimum: 0, maximum: 1 })
  @IsOptional()
  @IsNumber()
  @Min(0)
  @Max(1)
  secondOpinionShare?: number;
  /**
   * Whether second opinions of the demo's simulated verdicts are served to people. Off by default: a person asking
   * for work gets first draws and second opinions of people's verdicts.
   */
  @ApiPropertyOptional({ default: false })
  @IsOptional()
  @IsBoolean()
  serveSimulatedSecondOpinions?: boolean;
  @ApiPropertyOptional({ minimum: 30, maximum: 86400 })
  @IsOptional()
  @IsInt()
  @Min(30)
  @Max(86400)
  leaseSeconds?: number;
  @ApiPropertyOptional({ enum: STRATEGIES, default: 'entropy' })
  @IsOptional()
  @IsIn(STRATEGIES)
  strategy?: Strategy;
  @ApiPropertyOptional({ enum: SCORES, default: 'lac' })
  @IsOptional()
  @IsIn(SCORES)
  score?: ScoreKind;
  @ApiPropertyOptional({ minimum: 1, maximum: 100000, default: 10 })
  @IsOptional()
  @IsInt()
  @Min(1)
  @Max(100000)
  retrainEvery?: number;
  @ApiPropertyOptional({ minimum: 1, maximum: 86400, default: 30 })
  @IsOptional()
  @IsInt()
  @Min(1)
  @Max(86400)
  retrainAfterSeconds?: number;
}
