import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startStack, type Stack } from '../support/stack.js';

describe('the web screens are served by the API', () => {
  let s: Stack;
  beforeAll(async () => {
    s = await startStack('sqlite', { worker: false });
  });
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('answers every screen path with the page, under a same-origin content policy', async () => {
    for (const path of ['/', '/signin', '/desks/7/queue', '/desks/7/models/3']) {
      const r = await fetch(`${s.base}${path}`);
      expect(r.status).toBe(200);
      expect(r.headers.get('content-type')).toMatch(/^text\/html/);
      // Every source is 'self': a page cannot load or send anything to another host.
      expect(r.headers.get('content-security-policy')).toMatch(/default-src 'self'/);
      expect(r.headers.get('content-security-policy')).toMatch(/connect-src 'self'/);
      const html = await r.text();
      expect(html).toContain('<div id="app"></div>');
      // No reference to any other host in the page itself.
      expect(html).not.toMatch(/(src|href)="(https?:)?\/\//);
    }
  });

  it('keeps /api, the health checks and missing files as they are', async () => {
    const api = await fetch(`${s.base}/api/no-such-route`);
    expect(api.status).toBe(404);
    expect(api.headers.get('content-type')).toMatch(/json/);
    expect((await fetch(`${s.base}/healthz`)).status).toBe(200);
    expect((await fetch(`${s.base}/assets/no-such-file.js`)).status).toBe(404);
    expect((await fetch(`${s.base}/desks`, { method: 'POST' })).status).toBe(404);
  });

  it('caches the hashed assets and nothing else', async () => {
    const html = await (await fetch(`${s.base}/`)).text();
    const script = html.match(/src="(\/assets\/[^"]+\.js)"/)![1];
    const r = await fetch(`${s.base}${script}`);
    expect(r.status).toBe(200);
    expect(r.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    expect((await fetch(`${s.base}/signin`)).headers.get('cache-control')).toBe('no-store');
  });
});
