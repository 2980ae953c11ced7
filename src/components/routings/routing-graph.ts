// The order of work in a routing: steps grouped in stages (a step comes one stage after the last step it follows).
export interface GraphStep {
  key: string
  after: string[]
}

/** Stage number per step key (1 = can start at once); steps in a cycle get no stage. */
export function stagesOf(steps: GraphStep[]): Map<string, number> {
  const byKey = new Map(steps.map((s) => [s.key, s]))
  const stage = new Map<string, number>()
  const visiting = new Set<string>()
  const visit = (key: string): number | undefined => {
    if (stage.has(key)) return stage.get(key)
    if (visiting.has(key)) return undefined
    const s = byKey.get(key)
    if (!s) return 0
    visiting.add(key)
    let depth = 0
    for (const a of s.after) {
      const d = visit(a)
      if (d === undefined) {
        visiting.delete(key)
        return undefined
      }
      depth = Math.max(depth, d)
    }
    visiting.delete(key)
    stage.set(key, depth + 1)
    return depth + 1
  }
  steps.forEach((s) => visit(s.key))
  return stage
}

/** Steps grouped by stage, in stage order. */
export function stageGroups<T extends GraphStep>(steps: T[]): T[][] {
  const stages = stagesOf(steps)
  const groups: T[][] = []
  for (const s of steps) {
    const n = stages.get(s.key)
    if (!n) continue
    ;(groups[n - 1] ??= []).push(s)
  }
  return groups.filter(Boolean)
}
