import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { RequestHandler } from 'express';
import helmet from 'helmet';

/**
 * CSP sources (`'sha256-…'`) for the inline scripts of the built client's index.html (the theme
 * set before the first paint), so the policy can forbid every other inline script. Read once at
 * start; none when there is no built client (the API alone, tests).
 * @param html the page's HTML
 */
export function inlineScriptHashes(html: string): string[] {
  const out: string[] = [];
  for (const m of html.matchAll(/<script(?![^>]*\bsrc=)[^>]*>([\s\S]*?)<\/script>/gi)) {
    const body = m[1] ?? '';
    if (body.trim() === '') continue;
    // CSP Level 3 §8.4: the hash covers the script element's text exactly as written.
    out.push(`'sha256-${createHash('sha256').update(body, 'utf8').digest('base64')}'`);
  }
  return out;
}

/**
 * The response headers that keep the browser from misusing our pages and answers, through helmet
 * (a well-known Express middleware) rather than by hand:
 * - Content-Security-Policy: everything from this origin only; scripts only from files here (plus
 *   the hashed inline theme script); no plugins; no framing (`frame-ancestors 'none'`); forms and
 *   `<base>` only to this origin. Styles need no 'unsafe-inline': React and uPlot set styles
 *   through the DOM (CSSOM), which CSP does not restrict. `connect-src 'self'` covers the
 *   same-origin websocket (CSP Level 3 matches ws:/wss: for 'self'). No
 *   upgrade-insecure-requests: Seisift may be served over plain http on a private network.
 * - X-Content-Type-Options: nosniff; X-Frame-Options: DENY (for browsers without frame-ancestors).
 * - Referrer-Policy: same-origin (our own requests keep their Referer, which the CSRF check may read
 *   when Origin is absent; other sites get none).
 * - Strict-Transport-Security without includeSubDomains (browsers heed it only over https, i.e.
 *   behind the TLS proxy), and helmet's other defaults (COOP/CORP same-origin, no DNS prefetch…).
 * @param clientDir the built client (its index.html is read for inline-script hashes)
 */
export function securityHeaders(clientDir: string): RequestHandler {
  const index = join(clientDir, 'index.html');
  const hashes = existsSync(index) ? inlineScriptHashes(readFileSync(index, 'utf8')) : [];
  return helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        'default-src': ["'self'"],
        'base-uri': ["'self'"],
        'script-src': ["'self'", ...hashes],
        'script-src-attr': ["'none'"],
        'style-src': ["'self'"],
        'img-src': ["'self'", 'data:'],
        'font-src': ["'self'"],
        'connect-src': ["'self'"],
        'object-src': ["'none'"],
        'frame-ancestors': ["'none'"],
        'form-action': ["'self'"],
      },
    },
    referrerPolicy: { policy: 'same-origin' },
    xFrameOptions: { action: 'deny' },
    strictTransportSecurity: { maxAge: 15_552_000, includeSubDomains: false },
  });
}
