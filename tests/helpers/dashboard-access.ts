/**
 * The access cookie a browser holds after opening a dashboard server's printed address
 * (src/server/access-token.ts): for tests that talk to the server without a browser.
 */
export function accessCookie(printedUrl: string): { Cookie: string } {
  const url = new URL(printedUrl);
  const token = url.searchParams.get('token');
  if (!token) throw new Error(`no access token in ${printedUrl}`);
  return { Cookie: `bandwise-${url.port}=${token}` };
}
