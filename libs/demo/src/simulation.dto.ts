import { ApiPropertyOptional } from '@nestjs/swagger';
import { IsInt, IsOptional, Max, Min } from 'class-validator';

export class StartSimulationDto {
  @ApiPropertyOptional({
    minimum: 1,
    maximum: 10,
    default: 2,
    description: 'How long the simulated reviewer works, in minutes',
  })
  @IsOptional()
  @IsInt({ message: 'minutes: expected a whole number from 1 to 10' })
  @Min(1, { message: 'minutes: expected a whole number from 1 to 10' })
  @Max(10, { message: 'minutes: expected a whole number from 1 to 10' })
  minutes?: number;
}
