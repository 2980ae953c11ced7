// Hostile values for the API fuzzer: injection strings, awkward Unicode, huge strings, numbers JSON cannot carry, dates out of range.
import fc from 'fast-check'

/** SQL, HTML and template injection attempts: accepted ones must come back literally. */
export const INJECTIONS = [
  "'; drop table orders; --",
  '<script>alert(1)</script>',
  '<img src=x onerror=alert(1)>',
  "' OR '1'='1",
  "Robert'); DROP TABLE customers;--",
  '"; select pg_sleep(5); --',
  "1; update users set role = 'owner'",
  '{{constructor.constructor("alert(1)")()}}',
  '${7*7} #{7*7}',
  '../../etc/passwd',
  '\\x00\\\\"\'`',
  '%27%3B--',
  '<svg/onload=alert(1)>',
  'javascript:alert(1)',
]

/** Unicode that breaks naive code: emoji with joiners, right-to-left text, bidi overrides, combining marks, NUL, lone surrogates. */
export const UNICODE = [
  '💍✨ Ring for 👩🏽‍🔧',
  'خاتم ذهب عيار ١٨',
  'טבעת זהב',
  '\u202Egnir\u202C',
  'e\u0301\u0301\u0301',
  '\uFEFFbom',
  '𝕁𝕖𝕨𝕖𝕝 𝟙𝟠𝕜',
  'Zürich – Ångström — ﬁligree',
  'a\u0000b',
  '\u0000',
  '\ud800',
  'x\udc00y',
  '   ',
  '\t\n\r',
  '',
]

export const HUGE = ['x'.repeat(100_000), 'é'.repeat(50_000), '💎'.repeat(25_000), '<b>'.repeat(34_000)]

/** Marker objects for numbers JSON.stringify would turn into null: the request writer emits them raw. */
export const RAW_NUMBER = Symbol('raw number')
export interface RawNumber {
  [RAW_NUMBER]: string
}
export const raw = (text: string): RawNumber => ({ [RAW_NUMBER]: text })
export const isRaw = (v: unknown): v is RawNumber => typeof v === 'object' && v !== null && RAW_NUMBER in v

export const NUMBERS: unknown[] = [
  -1,
  0,
  -0,
  0.5,
  1.5,
  -2147483649,
  2 ** 31,
  2 ** 53 + 2,
  Number.MAX_SAFE_INTEGER,
  1e21,
  1e308,
  -1e308,
  5e-324,
  raw('1e999'),
  raw('-1e999'),
  raw('1' + '0'.repeat(400)),
  raw('NaN'),
  raw('Infinity'),
]

export const DATES = [
  '0000-00-00',
  '0001-01-01',
  '1899-12-31',
  '1969-12-31',
  '2024-02-30',
  '2023-13-01',
  '2023-00-10',
  '9999-12-31',
  '99999-01-01',
  '+275760-09-13',
  '2024-1-1',
  '2024/01/01',
  'yesterday',
  '2024-01-01T25:61:00Z',
  '2024-01-01T00:00:00+99:00',
  '1000-01-01T00:00:00Z',
  '9999-12-31T23:59:59.999Z',
  '+275760-09-13T00:00:00.000Z',
  '2024-06-01T10:00:00',
  '2024-06-01T10:00:00.123456789Z',
]

export const hostileString: fc.Arbitrary<string> = fc.oneof(
  { weight: 3, arbitrary: fc.constantFrom(...INJECTIONS) },
  { weight: 3, arbitrary: fc.constantFrom(...UNICODE) },
  { weight: 1, arbitrary: fc.constantFrom(...HUGE) },
  { weight: 2, arbitrary: fc.constantFrom(...DATES) },
  { weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.constantFrom('1', '-1', '0', 'NaN', 'Infinity', 'true', 'null', 'undefined', '[]', '{}', '__proto__', 'constructor') },
)

export const hostileNumber: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 3, arbitrary: fc.constantFrom(...NUMBERS) },
  { weight: 1, arbitrary: fc.double() },
  { weight: 1, arbitrary: fc.integer({ min: -2_000_000_000, max: 2_000_000_000 }) },
)

/** Any hostile JSON value: wrong types of every kind, deep and wide shapes, prototype keys. */
export const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 4, arbitrary: hostileString },
  { weight: 3, arbitrary: hostileNumber },
  { weight: 1, arbitrary: fc.constantFrom(null, true, false) },
  {
    weight: 1,
    arbitrary: fc.constantFrom([], {}, [null], [[[[]]]], { __proto__: { admin: true } }, JSON.parse('{"__proto__":{"polluted":1}}'), {
      constructor: { prototype: { x: 1 } },
    }),
  },
  { weight: 1, arbitrary: fc.array(fc.oneof(hostileString, hostileNumber), { maxLength: 5 }) },
  {
    weight: 1,
    arbitrary: fc.constantFrom(
      Array.from({ length: 5000 }, (_, i) => i),
      nest(400),
    ),
  },
  {
    weight: 1,
    arbitrary: fc.dictionary(
      hostileString.filter((s) => s.length < 50),
      fc.oneof(hostileString, hostileNumber),
      { maxKeys: 4 },
    ),
  },
)

function nest(depth: number): unknown {
  let v: unknown = 1
  for (let i = 0; i < depth; i++) v = i % 2 ? [v] : { a: v }
  return v
}

/** Serialises a body, writing RawNumber markers as bare JSON numbers (or the invalid tokens NaN / Infinity). */
export function writeJson(v: unknown): string {
  const tokens: string[] = []
  const text = JSON.stringify(v, (_k, val) => {
    if (isRaw(val)) {
      tokens.push(val[RAW_NUMBER])
      return `\u0001RAW${tokens.length - 1}\u0001`
    }
    return val
  })
  if (text === undefined) return 'null'
  return text.replace(/"\\u0001RAW(\d+)\\u0001"/g, (_m, i) => tokens[Number(i)]!)
}

/** Malformed path parameters (already URL-encoded where they need to be). */
export const PATH_JUNK = [
  '0',
  '-1',
  '1.5',
  '1e3',
  'abc',
  'NaN',
  'Infinity',
  'null',
  'undefined',
  '0x10',
  '%20',
  '9'.repeat(400),
  '99999999999999999999',
  '%00',
  '%',
  '%E0%A4%A',
  '%F0%9F%92%8D',
  '..%2F..%2Fetc%2Fpasswd',
  encodeURIComponent("'; drop table orders; --"),
  encodeURIComponent('<script>alert(1)</script>'),
  '%D9%A1%D9%A2',
  '00000000-0000-0000-0000-000000000000',
  'ffffffff-ffff-ffff-ffff-ffffffffffff',
  '1;2',
  '1,2',
  '%2B1',
]

/** Raw malformed query-string fragments (appended as they are). */
export const QUERY_JUNK = [
  'q=%',
  'q=%E0%A4%A',
  'page=-1',
  'page=1e999',
  'page=NaN',
  'pageSize=100000',
  'page=1&page=2',
  'q[]=a',
  'q[a]=b',
  '__proto__[x]=1',
  'sort=' + encodeURIComponent('name; drop table orders'),
  'order=sideways',
  'from=9999-99-99&to=0000-00-00',
  'from=2024-01-01&to=2030-01-01',
  'status=' + encodeURIComponent("open'--"),
  'q=' + encodeURIComponent('x'.repeat(5000)),
  'a'.repeat(3000) + '=1',
  '&&&==&',
  'format=csv',
  'format=' + encodeURIComponent('<script>'),
]
