import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { Transform } from 'class-transformer';
import { IsInt, IsOptional, IsString, Length, Min } from 'class-validator';
import { SETTLEMENT_REASON_MAX } from '#database';

const trim = ({ value }: { value: unknown }) => (typeof value === 'string' ? value.trim() : value);

export class SettleItemDto {
  @ApiProperty({ description: "A category name of the item's desk (abstain is not a settled label)" })
  @IsString()
  @Length(1, 100)
  category!: string;

  @ApiProperty({
    minLength: 1,
    maxLength: SETTLEMENT_REASON_MAX,
    description: 'Why this label: kept in the decision trail',
  })
  @Transform(trim)
  @IsString()
  @Length(1, SETTLEMENT_REASON_MAX, {
    message: `reason: required, 1 to ${SETTLEMENT_REASON_MAX} characters after trimming`,
  })
  reason!: string;

  @ApiPropertyOptional({ description: 'The desk the caller believes the item belongs to; refused when it does not' })
  @IsOptional()
  @IsInt()
  @Min(1)
  deskId?: number;
}
