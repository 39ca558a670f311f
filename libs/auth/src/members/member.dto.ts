import { ApiProperty } from '@nestjs/swagger';
import { IsIn } from 'class-validator';
import { MEMBER_ROLES, type MemberRole } from '#database';

export class PutMemberDto {
  @ApiProperty({ enum: MEMBER_ROLES, description: 'the role on this desk' })
  @IsIn(MEMBER_ROLES)
  role!: MemberRole;
}
