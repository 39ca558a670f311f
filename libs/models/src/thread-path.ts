import { fileURLToPath } from 'node:url';

/**
 * File of a worker-thread script beside `metaUrl`. Worker threads run
 * JavaScript only: when this code runs from TypeScript sources (the test
 * runner), the script is taken from the build output instead.
 */
export function threadScript(metaUrl: string, name: string): string {
  const here = fileURLToPath(metaUrl);
  if (here.endsWith('.js')) return fileURLToPath(new URL(`./${name}.js`, metaUrl));
  const built = here.replace(/\/(libs|apps)\//, '/dist/$1/').replace(/[^/]+\.ts$/, `${name}.js`);
  return built;
}
