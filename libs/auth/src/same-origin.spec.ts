import { describe, expect, it } from 'vitest';
import { crossSiteRefusal } from './same-origin.js';

const req = (method: string, headers: Record<string, string>) => ({ method, headers });

describe('crossSiteRefusal', () => {
  it('lets reads and same-origin changes through', () => {
    expect(crossSiteRefusal(req('GET', { origin: 'http://evil.example', host: 'cribra.test' }))).toBeNull();
    expect(crossSiteRefusal(req('POST', { origin: 'http://cribra.test:8080', host: 'cribra.test:8080' }))).toBeNull();
    expect(crossSiteRefusal(req('POST', { origin: 'https://cribra.test', host: 'cribra.test:443' }))).toBeNull();
    expect(crossSiteRefusal(req('POST', { 'sec-fetch-site': 'same-origin', host: 'cribra.test' }))).toBeNull();
    // A program (curl with a cookie) sends neither header.
    expect(crossSiteRefusal(req('DELETE', { host: 'cribra.test' }))).toBeNull();
  });

  it('refuses changes from another site, another port or an opaque origin', () => {
    expect(crossSiteRefusal(req('POST', { origin: 'http://evil.example', host: 'cribra.test' }))).toMatch(/Origin/);
    expect(crossSiteRefusal(req('PATCH', { origin: 'http://cribra.test:9999', host: 'cribra.test:8080' }))).toMatch(
      /Origin/,
    );
    expect(crossSiteRefusal(req('POST', { origin: 'null', host: 'cribra.test' }))).toMatch(/opaque/);
    expect(crossSiteRefusal(req('POST', { 'sec-fetch-site': 'cross-site', host: 'cribra.test' }))).toMatch(
      /cross-site/,
    );
    expect(crossSiteRefusal(req('PUT', { 'sec-fetch-site': 'same-site', host: 'cribra.test' }))).toMatch(/same-site/);
  });
});
