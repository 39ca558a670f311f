import { named, z } from '#api-docs';

export const PreferencesAnswer = named(
  'Preferences',
  z.strictObject({
    blurText: z.boolean().describe('blur each text on the queue until the reviewer reveals it'),
    breakReminderMinutes: z
      .int()
      .nullable()
      .describe('remind the reviewer to take a break after this many minutes on the queue; null: never'),
  }),
);
