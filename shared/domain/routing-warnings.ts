// Routing warnings: step graphs that save fine but plan work too early (a step free to start while outside work is away) or leave steps unconnected.

export interface WarningStep {
  key: string
  name: string
  kindId: number
  after: string[]
}

export type RoutingWarning =
  /** A step that follows nothing, listed after outside work it never meets: the planner may start it while that work is still away. */
  | { code: 'starts-while-away'; step: string; outside: string[]; message: string }
  /** Steps that no other step follows or comes after: a separate routing inside this one. */
  | { code: 'not-connected'; steps: string[]; message: string }

const quoted = (s: WarningStep) => `“${s.name.trim() || s.key}”`
const list = (xs: string[]) => (xs.length < 2 ? xs.join('') : `${xs.slice(0, -1).join(', ')} and ${xs.at(-1)}`)

/**
 * The warnings for a routing's steps, in list order. `isOutside` says whether an operation kind is outside work (casting, hallmarking).
 * Branches that start side by side on purpose and meet at a later step (a shank forged while its head is cast, then soldered together) are not warned about.
 * Keys in `after` that name no step are left to validation.
 */
export function routingWarnings(steps: WarningStep[], isOutside: (kindId: number) => boolean): RoutingWarning[] {
  if (steps.length < 2) return []
  const keys = new Set(steps.map((s) => s.key))
  const preds = new Map(steps.map((s) => [s.key, s.after.filter((a) => a !== s.key && keys.has(a))]))
  const succs = new Map(steps.map((s) => [s.key, [] as string[]]))
  for (const s of steps) for (const a of preds.get(s.key)!) succs.get(a)!.push(s.key)

  // Each step with the steps that come after it, directly or not.
  const below = new Map<string, Set<string>>()
  const reach = (key: string): Set<string> => {
    const known = below.get(key)
    if (known) return known
    const out = new Set([key])
    below.set(key, out) // a cycle stops here; validation reports it
    for (const n of succs.get(key)!) for (const k of reach(n)) out.add(k)
    return out
  }
  const meets = (a: string, b: string) => {
    const rb = reach(b)
    for (const k of reach(a)) if (rb.has(k)) return true
    return false
  }

  const warnings: RoutingWarning[] = []
  steps.forEach((s, i) => {
    if (preds.get(s.key)!.length) return
    const away = steps.slice(0, i).filter((o) => isOutside(o.kindId) && !meets(o.key, s.key))
    if (!away.length) return
    warnings.push({
      code: 'starts-while-away',
      step: s.key,
      outside: away.map((o) => o.key),
      message: `${quoted(s)} comes after no step, so it can be planned and started while ${list(away.map(quoted))} ${away.length === 1 ? 'is' : 'are'} still out. If it needs that work back, choose it under “Comes after”.`,
    })
  })

  // Parts of the graph that no link joins (links taken either way). The biggest part is the routing; ties go to the part that holds the last step.
  const part = new Map<string, number>()
  const parts: string[][] = []
  for (const s of steps) {
    if (part.has(s.key)) continue
    const n = parts.length
    const members: string[] = []
    const todo = [s.key]
    part.set(s.key, n)
    while (todo.length) {
      const k = todo.pop()!
      members.push(k)
      for (const m of [...preds.get(k)!, ...succs.get(k)!])
        if (!part.has(m)) {
          part.set(m, n)
          todo.push(m)
        }
    }
    parts.push(members)
  }
  if (parts.length > 1) {
    const last = part.get(steps.at(-1)!.key)!
    const main = parts.reduce((best, p, n) => (p.length > parts[best]!.length || (p.length === parts[best]!.length && n === last) ? n : best), 0)
    const byKey = new Map(steps.map((s) => [s.key, s]))
    parts.forEach((p, n) => {
      if (n === main) return
      const inOrder = steps.filter((s) => p.includes(s.key))
      const names = inOrder.map((s) => quoted(byKey.get(s.key)!))
      warnings.push({
        code: 'not-connected',
        steps: inOrder.map((s) => s.key),
        message:
          inOrder.length === 1
            ? `${names[0]} is not connected to the other steps: it comes after none of them and none comes after it.`
            : `${list(names)} are not connected to the other steps of the routing.`,
      })
    })
  }
  return warnings
}
