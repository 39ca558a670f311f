import { Injectable } from '@nestjs/common';

/**
 * The time retention periods are measured against. One injectable class, so tests set the time (by replacing `now`)
 * instead of waiting for days to pass.
 */
@Injectable()
export class RetentionClock {
  now(): Date {
    return new Date();
  }
}
