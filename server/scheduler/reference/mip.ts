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

/** A small shop for the reference MIP: jobs as chains of steps, each step with (machine, worker or -1, minutes) options. */
export interface ChainShop {
  jobs: { due: number; weight: number; steps: [number, number, number][][] }[]
  machines: number
  workers: number
}

/**
 * The disjunctive big-M MIP of a chain shop where a step takes a machine and (optionally) a worker, the duration per option,
 * minimising total weighted tardiness ('twt') or the makespan. Variables: s (start), x (option chosen, when there is a choice),
 * C and T per job, and for each pair of steps of different jobs and each machine or worker both may use, y = 1 when the first
 * goes before the second; the pair is kept apart only when both choose an option on that resource. M is the sum of each step's
 * longest option: a semi-active schedule (among which a regular objective has an optimum) ends by then.
 */
export function chainShopModel(t: ChainShop, objective: 'twt' | 'makespan'): string {
  const steps = t.jobs.flatMap((job, j) => job.steps.map((opts, k) => ({ j, k, opts, last: k === job.steps.length - 1 })))
  const big = steps.reduce((a, st) => a + Math.max(...st.opts.map((o) => o[2])), 0)
  const rows: string[] = []
  const binaries: string[] = []
  const bounds: string[] = []
  let r = 0
  /** A row from merged coefficients (constant moved to the right-hand side). */
  const row = (terms: Map<string, number>, sense: '<=' | '>=' | '=', rhs: number, constant = 0): void => {
    const parts: string[] = []
    for (const [v, a] of terms) if (a !== 0) parts.push(`${a < 0 ? '-' : '+'} ${Math.abs(a)} ${v}`)
    rows.push(` c${r++}: ${parts.join(' ')} ${sense} ${rhs - constant}`)
  }
  const add = (m: Map<string, number>, v: string, a: number) => m.set(v, (m.get(v) ?? 0) + a)
  const s = (i: number) => `s${i}`
  const x = (i: number, q: number) => `x${i}_${q}`
  /** Adds the step's duration (a constant, or the chosen option's) times `sign`; returns the constant part. */
  const duration = (m: Map<string, number>, i: number, sign: number): number => {
    const opts = steps[i]!.opts
    if (opts.length === 1) return sign * opts[0]![2]
    opts.forEach((o, q) => add(m, x(i, q), sign * o[2]))
    return 0
  }
  /** Adds coef × (1 when step i uses resource r of the kind); returns the constant part. */
  const uses = (m: Map<string, number>, i: number, kind: 0 | 1, res: number, coef: number): number => {
    const opts = steps[i]!.opts
    if (opts.length === 1) return opts[0]![kind] === res ? coef : 0
    opts.forEach((o, q) => {
      if (o[kind] === res) add(m, x(i, q), coef)
    })
    return 0
  }
  steps.forEach((st, i) => {
    bounds.push(` 0 <= ${s(i)} <= ${big}`)
    if (st.opts.length > 1) {
      row(new Map(st.opts.map((_, q) => [x(i, q), 1])), '=', 1)
      st.opts.forEach((_, q) => binaries.push(x(i, q)))
    }
    // Chain order, and the job's completion after its last step.
    const m = new Map<string, number>()
    add(m, st.last ? `C${st.j}` : s(i + 1), 1)
    add(m, s(i), -1)
    const c = duration(m, i, -1)
    row(m, '>=', 0, c)
  })
  t.jobs.forEach((job, j) => {
    if (objective === 'twt') {
      row(
        new Map([
          [`T${j}`, 1],
          [`C${j}`, -1],
        ]),
        '>=',
        -job.due,
      )
      bounds.push(` T${j} >= 0`)
    } else
      row(
        new Map([
          ['Cmax', 1],
          [`C${j}`, -1],
        ]),
        '>=',
        0,
      )
    bounds.push(` C${j} >= 0`)
  })
  for (let a = 0; a < steps.length; a++)
    for (let b = a + 1; b < steps.length; b++) {
      if (steps[a]!.j === steps[b]!.j) continue
      for (const kind of [0, 1] as const) {
        const count = kind === 0 ? t.machines : t.workers
        for (let res = 0; res < count; res++) {
          if (!steps[a]!.opts.some((o) => o[kind] === res) || !steps[b]!.opts.some((o) => o[kind] === res)) continue
          const y = `y${a}_${b}_${kind}_${res}`
          binaries.push(y)
          // a before b (y = 1): s_a + p_a - s_b + M y + M U_a + M U_b <= 3M
          const m1 = new Map<string, number>()
          add(m1, s(a), 1)
          add(m1, s(b), -1)
          add(m1, y, big)
          let c1 = duration(m1, a, 1)
          c1 += uses(m1, a, kind, res, big) + uses(m1, b, kind, res, big)
          row(m1, '<=', 3 * big, c1)
          // b before a (y = 0): s_b + p_b - s_a - M y + M U_a + M U_b <= 2M
          const m2 = new Map<string, number>()
          add(m2, s(b), 1)
          add(m2, s(a), -1)
          add(m2, y, -big)
          let c2 = duration(m2, b, 1)
          c2 += uses(m2, a, kind, res, big) + uses(m2, b, kind, res, big)
          row(m2, '<=', 2 * big, c2)
        }
      }
    }
  const obj = objective === 'twt' ? t.jobs.map((job, j) => `+ ${job.weight} T${j}`).join(' ') : '+ 1 Cmax'
  return ['Minimize', ` obj: ${obj}`, 'Subject To', ...rows, 'Bounds', ...bounds, 'Binaries', ...binaries.map((v) => ` ${v}`), 'End'].join('\n')
}

/** Solves the chain-shop MIP with HiGHS within timeLimitSeconds: the objective's value and whether HiGHS proved it optimal. */
export async function solveChainShopMip(
  t: ChainShop,
  objective: 'twt' | 'makespan',
  timeLimitSeconds: number,
): Promise<{ value: number | null; optimal: boolean; status: string }> {
  const highs = await highsLoader()
  const res = highs.solve(chainShopModel(t, objective), { output_flag: false, time_limit: timeLimitSeconds, mip_rel_gap: 0 })
  const has = res.Status === 'Optimal' || (Number.isFinite(res.ObjectiveValue) && res.ObjectiveValue < 1e20)
  return { value: has ? Math.round(res.ObjectiveValue) : null, optimal: res.Status === 'Optimal', status: res.Status }
}
