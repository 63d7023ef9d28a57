// What must not show while the groups are blinded: a real group name, or a number per coded group
// (a count or share per group tells the codes apart to anyone who knows the real group sizes).

/** A count (or share) after a coded group's name in a text: "group A 9", "group B 40 %"; not a frequency ("group A 13.6 Hz"). */
export function countsIn(text: string, codes: readonly string[]): string[] {
  return codes.flatMap((c) => text.match(new RegExp(`${c} \\d+(?![\\d.]|\\s*Hz)`, 'g')) ?? []);
}

/** Paths in a JSON value to every number held under a coded group's name, and to every text that counts a coded group. */
export function perGroupNumbers(value: unknown, codes: readonly string[], path = '$'): string[] {
  if (Array.isArray(value)) return value.flatMap((v, i) => perGroupNumbers(v, codes, `${path}[${i}]`));
  if (value === null || typeof value !== 'object') return typeof value === 'string' && countsIn(value, codes).length > 0 ? [`${path}: ${value}`] : [];
  const own = Object.entries(value)
    .filter(([k, v]) => codes.includes(k) && typeof v === 'number')
    .map(([k]) => `${path}.${k}`);
  return [...own, ...Object.entries(value).flatMap(([k, v]) => perGroupNumbers(v, codes, `${path}.${k}`))];
}

/** The real group names found in a text (case-insensitive). */
export function realNames(text: string, names: readonly string[]): string[] {
  return names.filter((n) => text.toLowerCase().includes(n.toLowerCase()));
}
