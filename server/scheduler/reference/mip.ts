// Reference tool (not used by the server): the disjunctive big-M MIP of (flexible) job shop (Manne 1960), solved by HiGHS (npm `highs`).
import highsLoader from 'highs'
import type { ShopFile } from '../formats.ts'

export interface MipResult {
  /** Best makespan found, null when HiGHS found no schedule in time. */
  makespan: number | null
  /** True when HiGHS proved the makespan optimal. */
  optimal: boolean
  status: string
  seconds: number
}

/** Writes the disjunctive model in CPLEX LP format. */
export function disjunctiveModel(file: ShopFile): string {
  const ops: { j: number; o: number; alts: { machine: number; duration: number }[] }[] = []
  file.jobs.forEach((job, j) => job.forEach((alts, o) => ops.push({ j, o, alts })))
  const big = ops.reduce((a, op) => a + Math.max(...op.alts.map((x) => x.duration)), 0)
  const s = (k: number) => `s${k}`
  const x = (k: number, m: number) => `x${k}_${m}`
  const flexible = ops.some((op) => op.alts.length > 1)
  const dur = (k: number): string => (flexible ? ops[k]!.alts.map((a) => `${a.duration} ${x(k, a.machine)}`).join(' + ') : `${ops[k]!.alts[0]!.duration}`)
  const rows: string[] = []
  const binaries: string[] = []
  let r = 0
  const row = (text: string): void => {
    rows.push(` c${r++}: ${text}`)
  }
  ops.forEach((op, k) => {
    if (flexible) {
      row(`${op.alts.map((a) => x(k, a.machine)).join(' + ')} = 1`)
      for (const a of op.alts) binaries.push(x(k, a.machine))
    }
    const next = ops[k + 1]
    const isLast = !next || next.j !== op.j
    // Routing order (and makespan at the end of each job).
    if (flexible) {
      const terms = op.alts.map((a) => `- ${a.duration} ${x(k, a.machine)}`).join(' ')
      row(isLast ? `C - ${s(k)} ${terms} >= 0` : `${s(k + 1)} - ${s(k)} ${terms} >= 0`)
    } else {
      row(isLast ? `C - ${s(k)} >= ${dur(k)}` : `${s(k + 1)} - ${s(k)} >= ${dur(k)}`)
    }
  })
  // One operation at a time per machine: for each pair that may share machine m, y = 1 means a before b.
  for (let a = 0; a < ops.length; a++) {
    for (let b = a + 1; b < ops.length; b++) {
      if (ops[a]!.j === ops[b]!.j) continue
      const shared = ops[a]!.alts.filter((u) => ops[b]!.alts.some((v) => v.machine === u.machine))
      if (shared.length === 0) continue
      const y = `y${a}_${b}`
      binaries.push(y)
      for (const u of shared) {
        const v = ops[b]!.alts.find((w) => w.machine === u.machine)!
        if (flexible) {
          const xa = x(a, u.machine),
            xb = x(b, u.machine)
          row(`${s(a)} - ${s(b)} + ${big} ${y} + ${big} ${xa} + ${big} ${xb} <= ${3 * big - u.duration}`)
          row(`${s(b)} - ${s(a)} - ${big} ${y} + ${big} ${xa} + ${big} ${xb} <= ${2 * big - v.duration}`)
        } else {
          row(`${s(a)} - ${s(b)} + ${big} ${y} <= ${big - u.duration}`)
          row(`${s(b)} - ${s(a)} - ${big} ${y} <= ${-v.duration}`)
        }
      }
    }
  }
  return [
    'Minimize',
    ' obj: C',
    'Subject To',
    ...rows,
    'Bounds',
    ...ops.map((_, k) => ` ${s(k)} >= 0`),
    ' C >= 0',
    'Binaries',
    ...binaries.map((b) => ` ${b}`),
    'End',
  ].join('\n')
}

/** Solves the disjunctive MIP with HiGHS within timeLimitSeconds. */
export async function solveMip(file: ShopFile, timeLimitSeconds: number): Promise<MipResult> {
  const highs = await highsLoader()
  const t0 = performance.now()
  const res = highs.solve(disjunctiveModel(file), { output_flag: false, time_limit: timeLimitSeconds, mip_rel_gap: 0 })
  const seconds = (performance.now() - t0) / 1000
  const c = res.Columns['C'] as { Primal?: number } | undefined
  const has = res.Status === 'Optimal' || (c?.Primal !== undefined && Number.isFinite(c.Primal) && res.ObjectiveValue > 0 && res.ObjectiveValue < 1e20)
  return { makespan: has ? Math.round(res.ObjectiveValue) : null, optimal: res.Status === 'Optimal', status: res.Status, seconds }
}
