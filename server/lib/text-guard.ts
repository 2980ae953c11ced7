// Text the database cannot keep as sent (NUL, lone UTF-16 surrogates) is refused up front, naming the field, instead of being altered or failing in SQL.
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?:^|[^\uD800-\uDBFF])[\uDC00-\uDFFF]/

export const UNSTORABLE_REASON = 'contains a character that cannot be stored (NUL or a broken Unicode sequence)'

/** The dotted path of the first string (within a request body, query or params) that cannot be stored, or null. */
export function unstorableText(v: unknown, path: (string | number)[] = [], depth = 0): string | null {
  if (typeof v === 'string') return v.includes('\u0000') || LONE_SURROGATE.test(v) ? path.join('.') || '_' : null
  if (depth > 32 || v === null || typeof v !== 'object') return null
  for (const [k, x] of Object.entries(v)) {
    const hit = unstorableText(x, [...path, k], depth + 1)
    if (hit) return hit
  }
  return null
}
