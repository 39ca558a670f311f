import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { Equals, IsBoolean, IsIn, IsInt, IsOptional, IsString, Length, Matches, Max, Min } from 'class-validator';
import { ROLES, type Role } from '#database';

export class LoginDto {
  @ApiProperty({ example: 'rowan' }) @IsString() @Length(1, 100) name!: string;
  @ApiProperty() @IsString() @Length(1, 500) password!: string;
}

export class CreateTokenDto {
  @ApiPropertyOptional({ example: 'laptop script' }) @IsOptional() @IsString() @Length(1, 100) name?: string;
  @ApiPropertyOptional({ minimum: 1, maximum: 3650, description: 'lifetime in days (default TOKEN_DAYS, 90)' })
  @IsOptional()
  @IsInt()
  @Min(1)
  @Max(3650)
  days?: number;
  @ApiPropertyOptional({ description: 'true: the token never expires (admins only)' })
  @IsOptional()
  @Equals(true, { message: 'never: when given, must be true' })
  never?: true;
}

export class CreateUserDto {
  @ApiProperty({ example: 'rowan' })
  @IsString()
  @Matches(/^[\p{L}\p{N}_.@-]{1,100}$/u, { message: 'name: 1–100 letters, digits, or _ . @ -' })
  name!: string;
  @ApiProperty({ enum: ROLES }) @IsIn(ROLES) role!: Role;
  @ApiPropertyOptional({
    minLength: 8,
    description: 'NIST SP 800-63B rules: 8 or more characters, not a common password',
  })
  @IsOptional()
  @IsString()
  @Length(8, 500)
  password?: string;
}

export class UpdateUserDto {
  @ApiPropertyOptional({ enum: ROLES }) @IsOptional() @IsIn(ROLES) role?: Role;
  @ApiPropertyOptional() @IsOptional() @IsBoolean() disabled?: boolean;
  @ApiPropertyOptional({
    minLength: 8,
    description: 'NIST SP 800-63B rules: 8 or more characters, not a common password',
  })
  @IsOptional()
  @IsString()
  @Length(8, 500)
  password?: string;
}
