// The served database's real file name, from the Content-Disposition header the dashboard server
// sends with it (RFC 6266 §4.3 with an RFC 5987 ext-value: filename*=UTF-8''<percent-encoded>).

/** The file name the header carries, or null when it carries none. */
export function servedDatabaseName(header: string | null): string | null {
  const m = header?.match(/filename\*=UTF-8''([^;\s]+)/i);
  if (!m) return null;
  try {
    return decodeURIComponent(m[1]);
  } catch {
    return null;
  }
}
