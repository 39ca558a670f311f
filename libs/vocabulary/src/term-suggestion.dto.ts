import { ApiProperty } from '@nestjs/swagger';
import { Transform } from 'class-transformer';
import { IsString, Length } from 'class-validator';

const trim = ({ value }: { value: unknown }) => (typeof value === 'string' ? value.trim() : value);

/** A suggested term accepted into, or dismissed from, a category's seed terms. */
export class TermDecisionDto {
  @ApiProperty({ example: 'threat' }) @IsString() @Length(1, 200) category!: string;

  @ApiProperty({ example: 'hurt', description: 'the term as suggested (1–100 characters)' })
  @Transform(trim)
  @IsString()
  @Length(1, 100)
  term!: string;
}
