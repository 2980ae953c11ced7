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
      const machine = stream[k++],
        duration = stream[k++]
      if (machine === undefined || duration === undefined || !Number.isFinite(machine) || !Number.isFinite(duration))
        fail(`job ${j} has fewer than ${m} operations`)
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
  let min = Infinity,
    max = -Infinity
  for (const job of file.jobs)
    for (const op of job)
      for (const a of op) {
        min = Math.min(min, a.machine)
        max = Math.max(max, a.machine)
      }
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

/** A due-date job shop (.twt): the .jss text followed by one `release due weight` line per job. */
export function parseTwt(text: string): Problem {
  const rows = numbersOf(text)
  const [n, m] = (rows[0] ?? fail('empty file')) as [number, number]
  if (!Number.isInteger(n) || !Number.isInteger(m) || n <= 0 || m <= 0) fail('bad header')
  const tail = rows.slice(rows.length - n)
  if (tail.some((r) => r.length !== 3)) fail(`expected ${n} lines of "release due weight" after the jobs`)
  const shop = parseJobShop(
    rows
      .slice(0, rows.length - n)
      .map((r) => r.join(' '))
      .join('\n'),
  )
  const problem = shopToProblem(shop)
  problem.jobs = problem.jobs.map((j, k) => ({ ...j, release: tail[k]![0]!, due: tail[k]![1]!, weight: tail[k]![2]! }))
  // Room for a very late schedule: all work in a row after the latest release.
  problem.horizon += Math.max(0, ...tail.map((r) => r[0]!))
  problem.benches = problem.benches.map((b) => ({ ...b, available: [{ start: 0, end: problem.horizon }] }))
  problem.workshopDays = [{ start: 0, end: problem.horizon }]
  return problem
}

/** Worker id used for a worker of a .fjw file. */
export const shopWorkerId = (w: number): string => `w${w}`

/** A flexible job shop with workers (.fjw): `jobs machines workers`, then per job nOps and per op k `machine worker duration` triples. */
export function parseFjw(text: string): Problem {
  const rows = numbersOf(text)
  const [n, m, w] = (rows[0] ?? fail('empty file')) as [number, number, number]
  if (![n, m, w].every((x) => Number.isInteger(x) && x > 0)) fail('bad header, expected "jobs machines workers"')
  const stream = rows.slice(1).flat()
  let k = 0
  const next = (what: string): number => {
    const v = stream[k++]
    if (v === undefined || !Number.isFinite(v)) fail(`ran out of numbers reading ${what}`)
    return v!
  }
  const jobs: Job[] = []
  const operations: Operation[] = []
  let horizon = 1
  for (let j = 0; j < n; j++) {
    jobs.push({ id: `j${j}`, name: `job ${j}`, release: 0, due: null, weight: 1 })
    const nOps = next(`job ${j}`)
    for (let o = 0; o < nOps; o++) {
      const alts = next(`job ${j} op ${o}`)
      const options = []
      let longest = 0
      for (let a = 0; a < alts; a++) {
        const machine = next(`job ${j} op ${o}`),
          worker = next(`job ${j} op ${o}`),
          duration = next(`job ${j} op ${o}`)
        if (machine < 0 || machine >= m || worker < 0 || worker >= w) fail(`job ${j} op ${o}: machine ${machine} or worker ${worker} out of range`)
        options.push({ benchId: shopBenchId(machine), personId: shopWorkerId(worker), minutes: duration })
        longest = Math.max(longest, duration)
      }
      if (options.length === 0) fail(`job ${j} op ${o} has no option`)
      horizon += longest
      operations.push({
        id: shopOperationId(j, o),
        jobId: `j${j}`,
        name: `job ${j} op ${o}`,
        kind: 'machine',
        predecessors: o > 0 ? [shopOperationId(j, o - 1)] : [],
        options,
      })
    }
  }
  const always = [{ start: 0, end: horizon }]
  const benches: Bench[] = Array.from({ length: m }, (_, i) => ({ id: shopBenchId(i), name: `machine ${i}`, available: always }))
  const people = Array.from({ length: w }, (_, i) => ({ id: shopWorkerId(i), name: `worker ${i}`, available: always }))
  return { origin: '2025-01-06', now: 0, horizon, workshopDays: always, benches, people, jobs, operations }
}
