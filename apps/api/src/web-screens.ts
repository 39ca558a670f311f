import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import express from 'express';

/**
 * Where the built screens are: `dist/web` beside the compiled API, or under
 * the repository root when the API runs from its sources (tests).
 */
export function webRoot(): string | null {
  const up = fileURLToPath(new URL('../../..', import.meta.url));
  for (const dir of [join(up, 'web'), join(up, 'dist', 'web')]) if (existsSync(join(dir, 'index.html'))) return dir;
  return null;
}

/** Paths the screens never own. */
const SERVER_PATHS = /^\/(api|healthz|readyz)(\/|$)/;

/*
 * The screens' own policy: scripts, styles, images and requests only from
 * this origin, so a page can reach no other host even by mistake.
 */
const SCREEN_POLICY =
  "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; font-src 'self'; connect-src 'self'; frame-ancestors 'none'; base-uri 'self'; form-action 'self'";

/**
 * Serves the web screens at `/`: hashed assets cached for a year, and
 * `index.html` for every other screen path so that a typed or bookmarked
 * URL opens its screen.
 */
export function webScreens(): express.RequestHandler {
  const root = webRoot();
  const assets = root
    ? express.static(root, {
        index: false,
        fallthrough: true,
        setHeaders: (res, path) => {
          res.setHeader('Content-Security-Policy', SCREEN_POLICY);
          if (/[\\/]assets[\\/]/.test(path)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
        },
      })
    : null;
  return (req, res, next) => {
    if (SERVER_PATHS.test(req.path) || (req.method !== 'GET' && req.method !== 'HEAD')) {
      next();
      return;
    }
    if (!root || !assets) {
      res
        .status(503)
        .type('text/plain')
        .send('The web screens are not built: run `npm run build` (the API under /api works without them).\n');
      return;
    }
    assets(req, res, () => {
      if (/\.[a-z0-9]+$/i.test(req.path)) {
        next();
        return;
      }
      res.setHeader('Content-Security-Policy', SCREEN_POLICY);
      res.sendFile(join(root, 'index.html'));
    });
  };
}
