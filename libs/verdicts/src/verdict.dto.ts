import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { Equals, IsBoolean, IsInt, IsOptional, IsString, IsUUID, Length, Max, Min } from 'class-validator';
import { URGENT_REASON_MAX } from '#database';

export class CreateVerdictDto {
  @ApiProperty({ format: 'uuid' }) @IsUUID() leaseId!: string;
  @ApiProperty() @IsInt() @Min(1) itemId!: number;
  @ApiPropertyOptional({ description: 'A category name of the desk; give this or abstain' })
  @IsOptional()
  @IsString()
  @Length(1, 100)
  category?: string;
  @ApiPropertyOptional({ description: 'true when the reviewer cannot tell' })
  @IsOptional()
  @Equals(true, { message: 'abstain: when given, must be true' })
  abstain?: true;
  @ApiProperty({
    description: 'Client-chosen idempotency key, unique per reviewer; replaying it returns the stored verdict',
  })
  @IsString()
  @Length(1, 100)
  clientId!: string;
  @ApiPropertyOptional({ minimum: 0 }) @IsOptional() @IsInt() @Min(0) @Max(7 * 24 * 3600 * 1000) elapsedMs?: number;
  @ApiPropertyOptional({ maxLength: 2000 }) @IsOptional() @IsString() @Length(0, 2000) note?: string;
  @ApiPropertyOptional({
    description: 'true escalates the item: it waits at the top of the supervisor’s overview until acknowledged',
  })
  @IsOptional()
  @IsBoolean()
  urgent?: boolean;
  @ApiPropertyOptional({
    minLength: 1,
    maxLength: URGENT_REASON_MAX,
    description: 'Why it is urgent, in a few words: required with urgent: true, refused without it',
  })
  @IsOptional()
  @IsString()
  urgentReason?: string;
}
