// A run's parameters JSON as "a.b: value" pairs for display, in the order given.

export function flattenParameters(value: Record<string, unknown>, prefix = ''): [string, string][] {
  const out: [string, string][] = [];
  for (const [k, v] of Object.entries(value)) {
    const key = prefix ? `${prefix}.${k}` : k;
    if (v !== null && typeof v === 'object' && !Array.isArray(v)) out.push(...flattenParameters(v as Record<string, unknown>, key));
    else if (Array.isArray(v)) out.push([key, v.map((x) => (typeof x === 'object' ? JSON.stringify(x) : String(x))).join(', ')]);
    else out.push([key, v === null ? '–' : String(v)]);
  }
  return out;
}
