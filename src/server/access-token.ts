// The dashboard server's per-start access token: a random secret carried by the printed address
// (?token=…), exchanged on the first page load for a cookie, compared in constant time, and
// never written to a log.
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';

/** Query parameter that carries the token in the printed address. */
export const TOKEN_PARAMETER = 'token';

/** 32 random bytes (256 bits) from the operating system's generator, base64url (RFC 4648 §5). */
export function newToken(): string {
  return randomBytes(32).toString('base64url');
}

/**
 * Whether `given` is the token, in time that does not depend on where they differ: both are
 * hashed to 32 bytes first, so neither their contents nor the token's length leak through timing.
 */
export function isToken(given: string | null | undefined, token: string): boolean {
  if (given === null || given === undefined) return false;
  const a = createHash('sha256').update(given, 'utf8').digest();
  const b = createHash('sha256').update(token, 'utf8').digest();
  return timingSafeEqual(a, b);
}

/**
 * The cookie's name: one per port, as browsers share cookies between the ports of one host
 * (RFC 6265 §8.5), so two dashboards open at once do not replace each other's cookie.
 */
export function cookieName(port: number): string {
  return `bandwise-${port}`;
}

/** Set-Cookie for the token: not readable by scripts, never sent by other sites (RFC 6265 §4.1; SameSite, RFC 6265bis). */
export function tokenCookie(port: number, token: string): string {
  return `${cookieName(port)}=${token}; HttpOnly; SameSite=Strict; Path=/`;
}

/** The values of every cookie called `name` in a Cookie header (RFC 6265 §5.4: "name=value; name=value"). */
export function cookieValues(header: string | undefined, name: string): string[] {
  if (!header) return [];
  const out: string[] = [];
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) out.push(part.slice(eq + 1).trim());
  }
  return out;
}

/** The raw request target with the token parameter's value hidden, for logs. */
export function withoutTokenValue(rawUrl: string): string {
  return rawUrl.replace(new RegExp(`([?&]${TOKEN_PARAMETER}=)[^&#]*`, 'g'), '$1[hidden]');
}

/** The request target with the token parameter removed (other parameters kept in order), for the redirect. */
export function withoutTokenParameter(pathOnly: string, query: string): string {
  const kept = query.split('&').filter((p) => p !== '' && p.split('=')[0] !== TOKEN_PARAMETER);
  return kept.length > 0 ? `${pathOnly}?${kept.join('&')}` : pathOnly;
}

/** The token parameter's values in a raw query string (without the '?'); undecodable values count as wrong. */
export function tokenParameters(query: string): string[] {
  const out: string[] = [];
  for (const p of query.split('&')) {
    const eq = p.indexOf('=');
    const name = eq < 0 ? p : p.slice(0, eq);
    if (name !== TOKEN_PARAMETER) continue;
    try {
      out.push(decodeURIComponent(eq < 0 ? '' : p.slice(eq + 1)));
    } catch {
      out.push('');
    }
  }
  return out;
}
