import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { Transform } from 'class-transformer';
import { ArrayMaxSize, IsArray, IsInt, IsOptional, IsString, Length, Min } from 'class-validator';
import { ERASURE_REASON_MAX } from '#database';

/** Most selectors of each kind in one request. */
export const ERASURE_SELECTOR_MAX = 1000;

const trim = ({ value }: { value: unknown }) => (typeof value === 'string' ? value.trim() : value);

export class EraseItemsDto {
  @ApiPropertyOptional({ type: [String], maxItems: ERASURE_SELECTOR_MAX, description: 'external ids to erase' })
  @IsOptional()
  @IsArray()
  @ArrayMaxSize(ERASURE_SELECTOR_MAX)
  @IsString({ each: true })
  @Length(1, 200, { each: true })
  externalIds?: string[];

  @ApiPropertyOptional({
    type: [String],
    maxItems: ERASURE_SELECTOR_MAX,
    description: 'sources: every item from them is erased',
  })
  @IsOptional()
  @IsArray()
  @ArrayMaxSize(ERASURE_SELECTOR_MAX)
  @IsString({ each: true })
  @Length(1, 200, { each: true })
  sources?: string[];

  @ApiPropertyOptional({ type: [Number], maxItems: ERASURE_SELECTOR_MAX, description: 'item ids of this desk' })
  @IsOptional()
  @IsArray()
  @ArrayMaxSize(ERASURE_SELECTOR_MAX)
  @IsInt({ each: true })
  @Min(1, { each: true })
  itemIds?: number[];

  @ApiProperty({
    minLength: 1,
    maxLength: ERASURE_REASON_MAX,
    description: 'Why: the request or the rule it follows (kept with the erasure and in the audit trail)',
  })
  @Transform(trim)
  @IsString()
  @Length(1, ERASURE_REASON_MAX, {
    message: `reason: required, 1 to ${ERASURE_REASON_MAX} characters after trimming`,
  })
  reason!: string;
}
