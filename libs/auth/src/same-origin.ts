/** Methods that change nothing, which a cross-site page may send without harm. */
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

interface RequestHeaders {
  headers: Record<string, string | string[] | undefined>;
  method: string;
}

const one = (v: string | string[] | undefined): string | undefined => (Array.isArray(v) ? v[0] : v);

/**
 * Why a state-changing request that a browser could have sent on its own (authenticated by the session cookie, or a
 * sign-in) must be refused as cross-site, or null when it may go on. The session cookie is SameSite=Strict already;
 * this is the second line (OWASP's CSRF prevention guidance, "verifying origin with standard headers" and "Fetch
 * Metadata headers"): `Sec-Fetch-Site` when the browser sends it, else `Origin` against the `Host` the request was
 * sent to. A request with neither header comes from a program, not from a page, and goes on.
 */
export function crossSiteRefusal(req: RequestHeaders): string | null {
  if (SAFE_METHODS.has(req.method.toUpperCase())) return null;
  const site = one(req.headers['sec-fetch-site'])?.toLowerCase();
  if (site !== undefined && site !== 'same-origin' && site !== 'none')
    return `a ${site} request may not change anything with the session cookie (Sec-Fetch-Site)`;
  const origin = one(req.headers.origin);
  if (origin === undefined) return null;
  const host = one(req.headers.host);
  let same: boolean;
  try {
    // Through the URL parser both ways, so that a default port written on one side only still compares equal.
    const from = new URL(origin);
    same = host !== undefined && from.host === new URL(`${from.protocol}//${host}`).host;
  } catch {
    same = false; // "null" (an opaque origin) or not a URL
  }
  if (!same)
    return `a request from ${origin === 'null' ? 'an opaque origin' : JSON.stringify(origin)} may not change anything with the session cookie (Origin differs from Host)`;
  return null;
}
