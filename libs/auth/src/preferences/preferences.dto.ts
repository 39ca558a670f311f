import { ApiProperty } from '@nestjs/swagger';
import { IsBoolean, IsInt, Max, Min, ValidateIf } from 'class-validator';
import { BREAK_MINUTES_MAX, BREAK_MINUTES_MIN } from './preferences.service.js';

export class PreferencesDto {
  @ApiProperty({ description: 'blur each text on the queue until the reviewer reveals it' })
  @IsBoolean()
  blurText!: boolean;

  @ApiProperty({
    type: Number,
    nullable: true,
    minimum: BREAK_MINUTES_MIN,
    maximum: BREAK_MINUTES_MAX,
    description: 'remind the reviewer to take a break after this many minutes on the queue; null: never',
  })
  @ValidateIf((_, v) => v !== null)
  @IsInt({ message: 'breakReminderMinutes: expected a whole number of minutes or null' })
  @Min(BREAK_MINUTES_MIN)
  @Max(BREAK_MINUTES_MAX)
  breakReminderMinutes!: number | null;
}
