// Readers for published shop benchmarks (OR-Library job shop .jss, Brandimarte/Kacem flexible job shop .fjs) into the engine's model.
import type { Problem, Operation, Bench, Job } from './model.ts'

/** A benchmark as read from its file: per job, per operation, the (machine, duration) alternatives. */
export interface ShopFile {
  kind: 'jssp' | 'fjsp'
  jobs: { machine: number; duration: number }[][][]
  machines: number
  /** 0 or 1: how the file numbers its machines. */
  machineBase: 0 | 1
}

const numbersOf = (text: string): number[][] =>
  text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .filter((l) => l.length > 0 && !l.startsWith('#'))
    .map((l) => l.split(/\s+/).map(Number))

const fail = (msg: string): never => {
  throw new Error(`benchmark file: ${msg}`)
}

/** Reads OR-Library job-shop text: `jobs machines`, then per job `machine time` pairs. */
export function parseJobShop(text: string): ShopFile {
  const rows = numbersOf(text)
  const head = rows[0] ?? fail('empty file')
  const [n, m] = head as [number, number]
  if (!Number.isInteger(n) || !Number.isInteger(m) || n <= 0 || m <= 0) fail(`bad header "${head.join(' ')}"`)
  // Some files wrap a job over several lines: read the body as one stream of numbers.
  const stream = rows.slice(1).flat()
  const jobs: { machine: number; duration: number }[][][] = []
  let k = 0
  for (let j = 0; j < n; j++) {
    const ops: { machine: number; duration: number }[][] = []
    for (let o = 0; o < m; o++) {
      const machine = stream[k++], duration = stream[k++]
      if (machine === undefined || duration === undefined || !Number.isFinite(machine) || !Number.isFinite(duration)) fail(`job ${j} has fewer than ${m} operations`)
      ops.push([{ machine: machine!, duration: duration! }])
    }
    jobs.push(ops)
  }
  return withBase({ kind: 'jssp', jobs, machines: m, machineBase: 0 })
}

/** Reads flexible job-shop text: `jobs machines [avg]`, then per job nOps and per op k followed by k `machine time` pairs. */
export function parseFlexibleJobShop(text: string): ShopFile {
  const rows = numbersOf(text)
  const head = rows[0] ?? fail('empty file')
  const [n, m] = head as [number, number]
  if (!Number.isInteger(n) || !Number.isInteger(m) || n <= 0 || m <= 0) fail(`bad header "${head.join(' ')}"`)
  const stream = rows.slice(1).flat()
  let k = 0
  const next = (what: string): number => {
    const v = stream[k++]
    if (v === undefined || !Number.isFinite(v)) fail(`ran out of numbers reading ${what}`)
    return v!
  }
  const jobs: { machine: number; duration: number }[][][] = []
  for (let j = 0; j < n; j++) {
    const nOps = next(`job ${j}`)
    const ops: { machine: number; duration: number }[][] = []
    for (let o = 0; o < nOps; o++) {
      const alts = next(`job ${j} op ${o}`)
      const list: { machine: number; duration: number }[] = []
      for (let a = 0; a < alts; a++) list.push({ machine: next(`job ${j} op ${o}`), duration: next(`job ${j} op ${o}`) })
      if (list.length === 0) fail(`job ${j} op ${o} has no machine`)
      ops.push(list)
    }
    jobs.push(ops)
  }
  return withBase({ kind: 'fjsp', jobs, machines: m, machineBase: 0 })
}

/** Detects 1-based machine numbering: some machine index equals the machine count and none is 0. */
function withBase(file: ShopFile): ShopFile {
  let min = Infinity, max = -Infinity
  for (const job of file.jobs) for (const op of job) for (const a of op) { min = Math.min(min, a.machine); max = Math.max(max, a.machine) }
  const base: 0 | 1 = max === file.machines && min >= 1 ? 1 : 0
  if (max - base >= file.machines || min - base < 0) fail(`machine numbers ${min}..${max} do not fit ${file.machines} machines`)
  return { ...file, machineBase: base }
}

/** Reads a benchmark by its file name's extension (.jss, .fjs; others are guessed from the text). */
export function parseShopFile(name: string, text: string): ShopFile {
  if (name.endsWith('.fjs')) return parseFlexibleJobShop(text)
  if (name.endsWith('.jss')) return parseJobShop(text)
  const rows = numbersOf(text)
  const m = rows[0]?.[1] ?? 0
  const flexible = (rows[0]?.length ?? 0) >= 3 || rows.slice(1).some((r) => r.length !== 2 * m)
  return flexible ? parseFlexibleJobShop(text) : parseJobShop(text)
}

/** Operation id used for job j, op o of a benchmark. */
export const shopOperationId = (j: number, o: number): string => `j${j}o${o}`
/** Bench id used for a machine as numbered in the file. */
export const shopBenchId = (machine: number): string => `m${machine}`

/** Turns a benchmark into a Problem: machines as always-open benches, no people, no due dates (so the objective is makespan). */
export function shopToProblem(file: ShopFile): Problem {
  let horizon = 1
  for (const job of file.jobs) for (const op of job) horizon += Math.max(...op.map((a) => a.duration))
  const always = [{ start: 0, end: horizon }]
  const benches: Bench[] = []
  for (let k = 0; k < file.machines; k++) {
    const num = k + file.machineBase
    benches.push({ id: shopBenchId(num), name: `machine ${num}`, available: always })
  }
  const jobs: Job[] = []
  const operations: Operation[] = []
  file.jobs.forEach((ops, j) => {
    jobs.push({ id: `j${j}`, name: `job ${j}`, release: 0, due: null, weight: 1 })
    ops.forEach((alts, o) => {
      operations.push({
        id: shopOperationId(j, o),
        jobId: `j${j}`,
        name: `job ${j} op ${o}`,
        kind: 'machine',
        predecessors: o > 0 ? [shopOperationId(j, o - 1)] : [],
        options: alts.map((a) => ({ benchId: shopBenchId(a.machine), personId: null, minutes: a.duration })),
      })
    })
  })
  return { origin: '2025-01-06', now: 0, horizon, workshopDays: always, benches, people: [], jobs, operations }
}
