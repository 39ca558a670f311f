// Builds only when needed, so that `npm start` and `npm run cli` do not pay for tsc and Vite on every run.
//   node scripts/ensure-built.js          build when dist/ is missing or older than the sources, and say so
//   node scripts/ensure-built.js --mark   record that dist/ is current (the last step of `npm run build`)
//   --root DIR                            another checkout (the tests use a small one)
// Plain JavaScript with no dependencies: it runs before anything is built, and after `npm ci --omit=dev`.
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import process from 'node:process';
import { fileURLToPath, URL } from 'node:url';

const rootAt = process.argv.indexOf('--root');
const root = rootAt > 0 ? join(process.argv[rootAt + 1], '/') : fileURLToPath(new URL('..', import.meta.url));
const stamp = join(root, 'dist', '.build-stamp');
/** What the build reads: the sources of every app and lib (the screens included) and the build settings. */
const inputs = ['apps', 'libs', 'bench', 'package.json', 'tsconfig.json', 'tsconfig.build.json'];

function newest(path) {
  let stat;
  try {
    stat = statSync(path);
  } catch {
    return { time: 0, file: null };
  }
  if (!stat.isDirectory()) return { time: stat.mtimeMs, file: path };
  let best = { time: 0, file: null };
  for (const entry of readdirSync(path)) {
    if (entry === 'node_modules') continue;
    const found = newest(join(path, entry));
    if (found.time > best.time) best = found;
  }
  return best;
}

if (process.argv.includes('--mark')) {
  writeFileSync(stamp, `${new Date().toISOString()}\n`);
  // The `cribra` command of package.json's "bin".
  const bin = join(root, 'dist', 'apps', 'cli', 'src', 'main.js');
  if (existsSync(bin)) chmodSync(bin, 0o755);
  process.exit(0);
}

let built;
try {
  built = statSync(stamp).mtimeMs;
} catch {
  built = 0;
}
let source = { time: 0, file: null };
for (const input of inputs) {
  const found = newest(join(root, input));
  if (found.time > source.time) source = found;
}
if (built > 0 && source.time <= built) process.exit(0);

const why = built === 0 ? 'dist/ is missing or was never finished' : `${source.file.slice(root.length)} changed since`;
process.stderr.write(`Building first (${why}); this takes a minute, later starts skip it.\n`);
const npm = process.env.npm_execpath
  ? [process.execPath, [process.env.npm_execpath, 'run', 'build']]
  : ['npm', ['run', 'build']];
// The build's output goes to stderr: stdout stays the command's own (one JSON line for `user add`).
const result = spawnSync(npm[0], npm[1], { cwd: root, stdio: ['ignore', 2, 2] });
if (result.error) {
  process.stderr.write(`cannot run the build: ${result.error.message}\n`);
  process.exit(1);
}
if (result.status !== 0) {
  process.stderr.write(
    'The build failed. A production install (npm ci --omit=dev) cannot build: build where the dev dependencies are, then copy dist/.\n',
  );
  process.exit(result.status ?? 1);
}
