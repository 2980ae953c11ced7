// Valid-looking values from a route's zod schema (through its JSON Schema), with real ids from the database, so fuzzing reaches the services.
import fc from 'fast-check'
import { z, type ZodType } from 'zod'

type Js = Record<string, any>

export interface IdPools {
  /** Real ids by table-ish name: customers, routings, kinds, benches, people, orders, plans, operations, jobBags, users, timeRecords. */
  [pool: string]: number[]
}

/** Which pool a numeric field draws real ids from, by its name. */
export function poolOfField(name: string): string | null {
  const n = name.toLowerCase()
  if (n === 'customerid') return 'customers'
  if (n === 'routingid') return 'routings'
  if (n === 'kindid') return 'kinds'
  if (n === 'benchid') return 'benches'
  if (n === 'personid') return 'people'
  if (n === 'orderid') return 'orders'
  if (n === 'planid' || n === 'against') return 'plans'
  if (n === 'operationid' || n === 'operationids') return 'operations'
  if (n === 'jobbagid') return 'jobBags'
  if (n === 'userid') return 'users'
  if (n === 'key') return null
  return null
}

export function jsonSchemaOf(schema: ZodType): Js {
  try {
    return z.toJSONSchema(schema, { io: 'input', unrepresentable: 'any' }) as Js
  } catch {
    return {}
  }
}

/** True when the JSON Schema says nothing (a transform over unknown): the generator cannot see inside. */
export const isOpaque = (js: Js) => !js.type && !js.anyOf && !js.allOf && !js.oneOf && !js.enum && js.const === undefined && !js.$ref

const ISO_DATE = '^\\d{4}-\\d{2}-\\d{2}$'
// Mostly near today (board windows span at most 62 days, so from/to drawn close together often pass), sometimes anywhere in range.
const now = Date.now()
const day = fc.oneof(
  { weight: 3, arbitrary: fc.date({ min: new Date(now - 20 * 86_400_000), max: new Date(now + 40 * 86_400_000), noInvalidDate: true }) },
  { weight: 1, arbitrary: fc.date({ min: new Date('2000-01-01T00:00:00Z'), max: new Date('2100-12-31T00:00:00Z'), noInvalidDate: true }) },
)

/** An arbitrary of values meant to pass the schema (refinements aside). `field` is the property name, for id pools. */
export function arbOf(js: Js, pools: IdPools, field = '', root: Js = js): fc.Arbitrary<unknown> {
  if (js.$ref) {
    const name = String(js.$ref).replace(/^#\/(\$defs|definitions)\//, '')
    const target = root.$defs?.[name] ?? root.definitions?.[name]
    return target ? fc.constant(null).chain(() => arbOf(target, pools, field, root)) : fc.constant(null)
  }
  if (js.const !== undefined) return fc.constant(js.const)
  if (Array.isArray(js.enum)) return fc.constantFrom(...js.enum)
  if (js.anyOf || js.oneOf) return fc.oneof(...(js.anyOf ?? js.oneOf).map((s: Js) => arbOf(s, pools, field, root)))
  if (js.allOf) {
    const parts = js.allOf.map((s: Js) => arbOf(s, pools, field, root))
    return fc
      .tuple(...(parts as [fc.Arbitrary<unknown>]))
      .map((vals: unknown[]) => (vals.every((v) => v && typeof v === 'object' && !Array.isArray(v)) ? Object.assign({}, ...vals) : vals[vals.length - 1]))
  }
  const type = Array.isArray(js.type) ? js.type[0] : js.type
  switch (type) {
    case 'object': {
      const props: Record<string, fc.Arbitrary<unknown>> = {}
      for (const [k, s] of Object.entries<Js>(js.properties ?? {})) props[k] = arbOf(s, pools, k, root)
      const required = (js.required ?? []).filter((k: string) => k in props)
      return fc.record(props, { requiredKeys: required })
    }
    case 'array': {
      const item = js.items ? arbOf(js.items, pools, field, root) : fc.anything()
      const min = js.minItems ?? 0
      return fc.array(item, { minLength: min, maxLength: Math.max(min, Math.min(js.maxItems ?? 4, 4)) })
    }
    case 'integer':
    case 'number': {
      const pool = poolOfField(field)
      if (pool && pools[pool]?.length)
        return fc.oneof({ weight: 4, arbitrary: fc.constantFrom(...pools[pool]!) }, { weight: 1, arbitrary: fc.integer({ min: 1, max: 1_000_000 }) })
      if (field === 'version') return fc.integer({ min: 0, max: 3 })
      const lo = js.minimum ?? (js.exclusiveMinimum !== undefined ? js.exclusiveMinimum + (type === 'integer' ? 1 : 1e-6) : -1000)
      const hiRaw = js.maximum ?? (js.exclusiveMaximum !== undefined ? js.exclusiveMaximum - (type === 'integer' ? 1 : 1e-6) : 10_000)
      const hi = Math.min(hiRaw, lo + 100_000)
      return type === 'integer'
        ? fc.integer({ min: Math.ceil(lo), max: Math.max(Math.ceil(lo), Math.floor(hi)) })
        : fc.double({ min: lo, max: Math.max(lo, hi), noNaN: true, noDefaultInfinity: true })
    }
    case 'boolean':
      return fc.boolean()
    case 'null':
      return fc.constant(null)
    case 'string': {
      if (js.format === 'uuid') return fc.uuid({ version: 4 })
      if (js.format === 'date-time') return day.map((d) => d.toISOString())
      if (js.format === 'email') return fc.emailAddress().map((e) => e.slice(0, js.maxLength ?? 200))
      if (js.pattern === ISO_DATE) return day.map((d) => d.toISOString().slice(0, 10))
      const min = js.minLength ?? 0
      const max = Math.max(min, Math.min(js.maxLength ?? 60, 60))
      if (js.pattern) {
        try {
          // Stretched to the length bounds instead of filtered: a pattern whose short matches never reach a minimum length
          // (an 8-character client id, say) would make a filter search forever. A stretched string may no longer match;
          // the server then answers 400, which the fuzz accepts when it names the field.
          const top = js.maxLength ?? Infinity
          return fc.stringMatching(new RegExp(js.pattern)).map((s) => {
            let t = s
            while (t.length > 0 && t.length < min) t += s
            return t.length > top ? t.slice(0, top) : t
          })
        } catch {
          return fc.string({ minLength: min, maxLength: max })
        }
      }
      // Hostile strings that fit the field's length (chosen before, never filtered after: with none fitting, a filter would search forever).
      const hostile = ["'; drop table orders; --", '<script>alert(1)</script>', '<img src=x onerror=alert(1)>', '💍 Zürich خاتم'].filter(
        (s) => s.length >= min && s.length <= (js.maxLength ?? Infinity),
      )
      const plain = fc.string({ minLength: Math.max(min, 1), maxLength: max })
      return hostile.length ? fc.oneof({ weight: 3, arbitrary: plain }, { weight: 1, arbitrary: fc.constantFrom(...hostile) }) : plain
    }
    default:
      return fc.anything({ maxDepth: 1 })
  }
}
