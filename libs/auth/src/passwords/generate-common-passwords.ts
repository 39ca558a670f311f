/**
 * Writes `common-passwords.json` beside its source file: the list of common passwords new passwords are checked
 * against (NIST SP 800-63B, section 5.1.1.2, asks for a check against "commonly-used, expected, or compromised"
 * passwords). Source: the ranked password list of the npm package @zxcvbn-ts/language-common (MIT licence;
 * copyright Dan Wheeler and Dropbox, Inc., and @zxcvbn-ts), a development dependency, passed through
 * {@link selectCommonPasswords}. Run `npm run passwords:generate`; `common-passwords.spec.ts` checks that the shipped
 * file is what this writes.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';
import { selectCommonPasswords } from './select-common-passwords.js';

/** The package's ranked list, most used first. */
export function rankedSourcePasswords(): string[] {
  const require = createRequire(import.meta.url);
  const dir = require.resolve('@zxcvbn-ts/language-common/package.json').replace(/package\.json$/, '');
  return JSON.parse(readFileSync(`${dir}src/passwords.json`, 'utf8')) as string[];
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const list = selectCommonPasswords(rankedSourcePasswords());
  // The source file's folder, also when run from the build output.
  const target = fileURLToPath(new URL('common-passwords.json', import.meta.url)).replace(/\/dist\/libs\//, '/libs/');
  writeFileSync(target, `${JSON.stringify(list, null, 2)}\n`);
  process.stdout.write(`${list.length} passwords written to ${target}\n`);
}
