import { ApiProperty, ApiPropertyOptional } from '@nestjs/swagger';
import { IsBoolean, IsIn, IsOptional, IsString, Length, Matches } from 'class-validator';
import { ROLES, type Role } from '#database';

export class LoginDto {
  @ApiProperty({ example: 'rowan' }) @IsString() @Length(1, 100) name!: string;
  @ApiProperty() @IsString() @Length(1, 500) password!: string;
}

export class CreateTokenDto {
  @ApiPropertyOptional({ example: 'laptop script' }) @IsOptional() @IsString() @Length(1, 100) label?: string;
}

export class CreateUserDto {
  @ApiProperty({ example: 'rowan' })
  @IsString()
  @Matches(/^[\p{L}\p{N}_.@-]{1,100}$/u, { message: 'name: 1–100 letters, digits, or _ . @ -' })
  name!: string;
  @ApiProperty({ enum: ROLES }) @IsIn(ROLES) role!: Role;
  @ApiPropertyOptional({ minLength: 8 }) @IsOptional() @IsString() @Length(8, 500) password?: string;
}

export class UpdateUserDto {
  @ApiPropertyOptional({ enum: ROLES }) @IsOptional() @IsIn(ROLES) role?: Role;
  @ApiPropertyOptional() @IsOptional() @IsBoolean() disabled?: boolean;
  @ApiPropertyOptional({ minLength: 8 }) @IsOptional() @IsString() @Length(8, 500) password?: string;
}
