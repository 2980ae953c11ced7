// Seeded generator of realistic jewellery workshops for benchmarks and property tests (not demo data).
import type { Bench, Interval, Job, Operation, OperationOption, Person, Problem } from './model.ts'
import { createRng } from './random.ts'

export interface WorkshopSettings {
  seed: number
  jobs: number
  /** Weeks over which due dates spread; default 4. */
  dueWeeks?: number
  /** Mark some first operations done and pin one running operation; default false. */
  withProgress?: boolean
  /** Scale of operation durations (1 = typical); default 1. */
  workScale?: number
}

const DAY = 1440
const at = (day: number, h: number, m = 0): number => day * DAY + h * 60 + m

type Kind = 'sawing' | 'soldering' | 'setting' | 'polishing' | 'finishing' | 'assembly'

interface Skilled {
  id: string
  name: string
  speed: Partial<Record<Kind, number>>
  mornings?: boolean
}

const BENCHES: { id: string; name: string; kinds: Kind[] }[] = [
  { id: 'saw-1', name: 'Saw bench', kinds: ['sawing'] },
  { id: 'solder-1', name: 'Soldering hearth 1', kinds: ['soldering'] },
  { id: 'solder-2', name: 'Soldering hearth 2', kinds: ['soldering'] },
  { id: 'setting-1', name: 'Setting bench 1', kinds: ['setting'] },
  { id: 'setting-2', name: 'Setting bench 2', kinds: ['setting'] },
  { id: 'polish-1', name: 'Polishing lathe', kinds: ['polishing'] },
  { id: 'bench-1', name: 'Goldsmith bench 1', kinds: ['sawing', 'finishing', 'assembly'] },
  { id: 'bench-2', name: 'Goldsmith bench 2', kinds: ['sawing', 'finishing', 'assembly'] },
]

const PEOPLE: Skilled[] = [
  { id: 'ada', name: 'Ada (setter)', speed: { setting: 1, finishing: 1.1 } },
  { id: 'tom', name: 'Tom (trainee setter)', speed: { setting: 1.6, finishing: 1.3 } },
  { id: 'gil', name: 'Gil (goldsmith)', speed: { sawing: 1, soldering: 1, finishing: 1, assembly: 1 } },
  { id: 'rhea', name: 'Rhea (goldsmith)', speed: { sawing: 1.1, soldering: 0.9, finishing: 1.1, assembly: 1 } },
  { id: 'pol', name: 'Paul (polisher)', speed: { polishing: 1, finishing: 1.2 } },
  {
    id: 'mia',
    name: 'Mia (manager at the bench)',
    speed: { sawing: 1.3, soldering: 1.3, setting: 1.4, polishing: 1.4, finishing: 1.2, assembly: 1.3 },
    mornings: true,
  },
]

interface Step {
  name: string
  kind: Kind | 'casting' | 'hallmarking'
  minutes?: number
  days?: number
  after: number[]
  waitAfter?: number
}

/** Routings of about six operations, with branch/join, outside work and pickle waits. */
const ROUTINGS: Step[][] = [
  [
    { name: 'casting', kind: 'casting', days: 2, after: [] },
    { name: 'clean-up', kind: 'finishing', minutes: 45, after: [0] },
    { name: 'stone setting', kind: 'setting', minutes: 90, after: [1] },
    { name: 'solder findings', kind: 'soldering', minutes: 30, after: [1], waitAfter: 20 },
    { name: 'polishing', kind: 'polishing', minutes: 40, after: [2, 3] },
    { name: 'hallmarking', kind: 'hallmarking', days: 3, after: [4] },
  ],
  [
    { name: 'saw blank', kind: 'sawing', minutes: 35, after: [] },
    { name: 'solder shank', kind: 'soldering', minutes: 40, after: [0], waitAfter: 20 },
    { name: 'file and shape', kind: 'finishing', minutes: 50, after: [1] },
    { name: 'stone setting', kind: 'setting', minutes: 70, after: [2] },
    { name: 'polishing', kind: 'polishing', minutes: 35, after: [3] },
    { name: 'final check', kind: 'finishing', minutes: 15, after: [4] },
  ],
  [
    { name: 'saw parts', kind: 'sawing', minutes: 30, after: [] },
    { name: 'solder frame', kind: 'soldering', minutes: 45, after: [0], waitAfter: 15 },
    { name: 'make bezel', kind: 'assembly', minutes: 55, after: [] },
    { name: 'assemble', kind: 'assembly', minutes: 60, after: [1, 2] },
    { name: 'polishing', kind: 'polishing', minutes: 30, after: [3] },
    { name: 'hallmarking', kind: 'hallmarking', days: 2, after: [4] },
  ],
]

/** Workshop days Monday–Friday from day 0 (a Monday), without the closure day. */
function openDays(days: number, closure: number): number[] {
  const out: number[] = []
  for (let d = 0; d < days; d++) if (d % 7 < 5 && d !== closure) out.push(d)
  return out
}

const minus = (list: Interval[], cut: Interval): Interval[] =>
  list.flatMap((w) => {
    if (cut.end <= w.start || cut.start >= w.end) return [w]
    const out: Interval[] = []
    if (w.start < cut.start) out.push({ start: w.start, end: cut.start })
    if (cut.end < w.end) out.push({ start: cut.end, end: w.end })
    return out
  })

/** Generates a workshop of 8 benches and 6 people with `jobs` job bags; same settings, same workshop. */
export function generateWorkshop(settings: WorkshopSettings): Problem {
  const rng = createRng(settings.seed)
  const scale = settings.workScale ?? 1
  const dueWeeks = settings.dueWeeks ?? 4
  // Enough calendar for the load: about 2,400 workable person-minutes a day, with room to spare.
  const workMinutes = settings.jobs * 280 * scale
  const days = Math.max(7 * (dueWeeks + 3), Math.ceil((workMinutes / 2000) * 1.4 * 1.5) + 21)
  const closure = 9 // the second Wednesday: workshop closed
  const open = openDays(days, closure)
  const workshopDays = open.map((d) => ({ start: at(d, 8, 30), end: at(d, 17) }))
  const benches: Bench[] = BENCHES.map((b) => {
    let available: Interval[] = open.map((d) => ({ start: at(d, 8), end: at(d, 18) }))
    if (b.id === 'polish-1') available = minus(available, { start: at(2, 8), end: at(2, 12) }) // motor service
    if (b.id === 'solder-2') available = minus(available, { start: at(15, 8), end: at(16, 18) }) // torch repair
    return { id: b.id, name: b.name, available }
  })
  const people: Person[] = PEOPLE.map((p) => {
    let available: Interval[] = open.flatMap((d) =>
      p.mornings
        ? [{ start: at(d, 8, 30), end: at(d, 12, 30) }]
        : [
            { start: at(d, 8, 30), end: at(d, 12, 30) },
            { start: at(d, 13), end: at(d, 17) },
          ],
    )
    if (p.id === 'tom') available = minus(available, { start: at(7, 0), end: at(10, 0) }) // leave
    if (p.id === 'rhea') available = minus(available, { start: at(4, 12, 30), end: at(4, 17) }) // half day off
    return { id: p.id, name: p.name, available }
  })
  const optionsFor = (kind: Kind, minutes: number): OperationOption[] => {
    const out: OperationOption[] = []
    for (const b of BENCHES) {
      if (!b.kinds.includes(kind)) continue
      for (const p of PEOPLE) {
        const s = p.speed[kind]
        if (s !== undefined) out.push({ benchId: b.id, personId: p.id, minutes: Math.max(5, Math.round(minutes * s * scale)) })
      }
    }
    return out
  }
  const jobs: Job[] = []
  const operations: Operation[] = []
  const now = at(0, 8, 30)
  const lastOpenBefore = (day: number): number => open.filter((d) => d <= day).pop() ?? 0
  for (let j = 0; j < settings.jobs; j++) {
    const id = `bag-${String(j + 1).padStart(4, '0')}`
    const routing = ROUTINGS[rng.int(ROUTINGS.length)]!
    const release = rng.next() < 0.8 ? now : at(rng.int(10), 8, 30)
    const dueDay = lastOpenBefore(4 + rng.int(dueWeeks * 7 - 4))
    const weight = rng.next() < 0.1 ? 5 : 1 + rng.int(3)
    jobs.push({ id, name: `Bag ${j + 1}`, release, due: at(dueDay, 17), weight })
    const size = 0.6 + rng.next() * 0.9
    routing.forEach((step, k) => {
      const op: Operation = {
        id: `${id}-${k + 1}`,
        jobId: id,
        name: `${step.name} (bag ${j + 1})`,
        kind: step.kind,
        predecessors: step.after.map((a) => `${id}-${a + 1}`),
        options: step.kind === 'casting' || step.kind === 'hallmarking' ? [] : optionsFor(step.kind, Math.round((step.minutes ?? 30) * size)),
      }
      if (step.days !== undefined) op.outsideWorkingDays = step.days
      if (step.waitAfter !== undefined) op.waitAfter = step.waitAfter
      operations.push(op)
    })
  }
  if (settings.withProgress) {
    // Some first steps are finished, and one job's saw work is running on the saw bench with Gil since now.
    // Finished ten minutes ago, so a wait after them (pickle, cure) still holds their successors a little.
    for (const op of operations)
      if (op.predecessors.length === 0 && !op.outsideWorkingDays && rng.next() < 0.3) {
        op.done = true
        op.finishedAt = now - 10
      }
    const running = operations.find((o) => !o.done && o.kind === 'sawing' && o.predecessors.length === 0)
    const opt = running?.options.find((o) => o.benchId === 'saw-1' && o.personId === 'gil')
    if (running && opt) running.fixed = { benchId: 'saw-1', personId: 'gil', start: now }
  }
  return { origin: '2025-03-03', now, horizon: at(days, 0), workshopDays, benches, people, jobs, operations }
}
