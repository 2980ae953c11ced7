// The demo's last two working weeks: six job bags finished over the last working days, written step by step as the benches would have
// recorded them (who, at which bench, starts, pauses with their reasons, finishes), outside work sent and booked back, two of them
// collected and paid (a deposit when taken, the balance on collection), one of those a repair of the customer's own ring. It is
// booked into the calendar and the bookings of the older history (seed.ts), so it keeps to every person's working time and never
// lands on their other work; a job that does not fit before now is tried a working day earlier.
import { and, eq, inArray } from 'drizzle-orm'
import { routingStepMinutes } from '../../shared/domain/estimate'
import { paymentVat, storedVatTerms, type PaidWithVat } from '../../shared/domain/vat'
import type { PieceParams } from '../../shared/schemas/order'
import { dayjs, type Interval, type MinuteClock } from '../lib/time'
import type { Trx } from './client'
import * as s from './schema/index'

/** What an order of the demo is made from when it is not drawn at random. */
export interface OrderPick {
  routing: string
  piece: string
  params: Partial<PieceParams>
  customerId: number
  priority: number
}

/** The older history's calendar and bookings as seed.ts keeps them, in minutes of `clock`. */
export interface HistoryDesk {
  tx: Trx
  workshopId: number
  clock: MinuteClock
  nowMinute: number
  /** The workshop's open time less its closures, sorted. */
  workshopOpen: Interval[]
  defaultParams: PieceParams
  /** What each person (`p<id>`) and each bench (`b<id>`) is already booked for. */
  busyOf(key: string): Interval[]
  /** The first `minutes` a person can give at a bench from `ready` on, in pieces of their free working time; null when not done by now. */
  book(personId: number, benchId: number, ready: number, minutes: number): Interval[] | null
  /** Why a piece of work stopped before the next piece of it: a break, the end of the day, or another job took them away. */
  pauseReason(personId: number, piece: Interval, next: Interval): string
  makeOrder(o: {
    due: Date
    status: string
    created: Date
    finished: boolean
    pick: OrderPick
  }): Promise<{ order: typeof s.orders.$inferSelect; bag: typeof s.jobBags.$inferSelect; ops: (typeof s.operations.$inferSelect)[] }>
}

type Method = 'cash' | 'bank-transfer'
/** A pause the person chose: after this share of the step's work, with its reason (a workshop default), back the next working day or minutes later. */
type Pause = { after: number; reason: string; note?: string; back: 'next-day' | number }
/** Who did a step at which bench, and how their time came out: actual = estimate ÷ their speed × pace. */
type BenchStep = { who: string; bench: string; pace: number; pause?: Pause }
interface Job {
  routing: string
  piece: string
  params: Partial<PieceParams>
  customer: string
  priority: number
  /** Working days before the last one up to now on which its work starts (tried further back while it does not fit). */
  startsBack: number
  /** Working days between taking the order and starting it. */
  takenBefore: number
  steps: Record<string, BenchStep>
  /** Outside work back this many working days after its lead time. */
  late?: Record<string, number>
  /** Collected this many working days after its last step: a deposit when it was taken and the balance on collection. */
  collected?: { after: number; deposit: Method; balance: Method }
  /** Not collected yet: the deposit paid when it was taken. */
  deposit?: Method
}

// Paces are the demo's own: most steps within a fifth either side of the person's usual speed, a few well over (a fiddly seat,
// a mop that came loose), so the estimates run over on some steps and under on others.
const JOBS: Job[] = [
  {
    routing: 'halo-ring',
    piece: 'Oval halo, 14 stones',
    params: { metal: 'platinum-950', stoneCount: 15, stoneSizeMm: 1.5 },
    customer: 'Hana Brightwater',
    priority: 4,
    startsBack: 10,
    takenBefore: 2,
    steps: {
      shank: { who: 'Priya', bench: 'Forge & soldering station', pace: 0.95 },
      join: { who: 'Priya', bench: 'Forge & soldering station', pace: 1.25 },
      file: { who: 'Jonah', bench: 'Fabrication bench 1', pace: 1.05 },
      set: {
        who: 'Ines',
        bench: 'Setting bench A',
        pace: 1.05,
        pause: { after: 0.65, reason: 'waiting-for-stones', note: 'Two halo stones chipped in the parcel; replacements due tomorrow', back: 'next-day' },
      },
      polish: { who: 'Ruth', bench: 'Polishing station', pace: 1.1 },
      inspect: { who: 'Sam', bench: 'Setting bench B', pace: 0.8 },
    },
    deposit: 'bank-transfer',
  },
  {
    routing: 'wedding-pair',
    piece: 'D-shape bands, brushed',
    params: { metal: 'gold-18ct', finish: 'brushed' },
    customer: 'Emrys Calloway',
    priority: 3,
    startsBack: 10,
    takenBefore: 1,
    late: { cast: 1 },
    steps: {
      file: { who: 'Jonah', bench: 'Fabrication bench 2', pace: 1.2 },
      polish: { who: 'Ruth', bench: 'Polishing station', pace: 0.85 },
      inspect: { who: 'Sam', bench: 'Fabrication bench 2', pace: 1 },
    },
    deposit: 'bank-transfer',
  },
  {
    routing: 'retip-claws',
    piece: 'Six-claw solitaire: retip',
    params: { metal: 'gold-18ct', stoneCount: 6 },
    customer: 'Nell Wetherby',
    priority: 3,
    startsBack: 8,
    takenBefore: 1,
    steps: {
      assess: {
        who: 'Ines',
        bench: 'Setting bench A',
        pace: 1.3,
        pause: {
          after: 0.6,
          reason: 'waiting-for-approval',
          note: 'Two claws worn to the stone: asked the customer to approve retipping all six',
          back: 'next-day',
        },
      },
      retip: { who: 'Priya', bench: 'Forge & soldering station', pace: 1.15 },
      file: { who: 'Jonah', bench: 'Fabrication bench 2', pace: 0.85 },
      tighten: { who: 'Ines', bench: 'Setting bench B', pace: 0.9 },
      polish: { who: 'Ruth', bench: 'Polishing station', pace: 1.05 },
    },
    collected: { after: 2, deposit: 'cash', balance: 'cash' },
  },
  {
    routing: 'pave-pendant',
    piece: 'Pavé moon pendant',
    params: { metal: 'silver-925', stoneCount: 12, stoneSizeMm: 1.3, sizeMm: 18 },
    customer: 'Orla Finchcombe',
    priority: 3,
    startsBack: 8,
    takenBefore: 3,
    steps: {
      laminate: { who: 'Priya', bench: 'Forge & soldering station', pace: 1.05 },
      bail: { who: 'Jonah', bench: 'Fabrication bench 1', pace: 1.2 },
      pierce: { who: 'Jonah', bench: 'Fabrication bench 1', pace: 0.9 },
      solder: { who: 'Priya', bench: 'Forge & soldering station', pace: 1 },
      file: {
        who: 'Theo',
        bench: 'Fabrication bench 2',
        pace: 1.15,
        pause: { after: 0.5, reason: 'question-for-manager', note: 'How far to take the bevel on the moon’s inner edge', back: 'next-day' },
      },
      drill: { who: 'Jonah', bench: 'Drilling station', pace: 0.95 },
      set: { who: 'Ines', bench: 'Setting bench A', pace: 1.2 },
      polish: {
        who: 'Ruth',
        bench: 'Polishing station',
        pace: 1.15,
        pause: { after: 0.4, reason: 'tool-fault', note: 'Mop came loose on the spindle; refitted and trued', back: 25 },
      },
      inspect: { who: 'Ines', bench: 'Setting bench B', pace: 0.9 },
    },
    deposit: 'cash',
  },
  {
    routing: 'etched-cuff',
    piece: 'Fern-etched cuff',
    params: { metal: 'silver-925', sizeMm: 160, finish: 'oxidised' },
    customer: 'Milo Trevenna',
    priority: 2,
    startsBack: 6,
    takenBefore: 2,
    steps: {
      blank: { who: 'Jonah', bench: 'Fabrication bench 2', pace: 1 },
      resist: { who: 'Theo', bench: 'Fabrication bench 1', pace: 1.2 },
      etch: { who: 'Priya', bench: 'Acid & etch station', pace: 1.1 },
      form: { who: 'Priya', bench: 'Forge & soldering station', pace: 0.85 },
      oxidise: { who: 'Ruth', bench: 'Acid & etch station', pace: 1 },
      polish: { who: 'Theo', bench: 'Polishing station', pace: 1.3 },
    },
    deposit: 'cash',
  },
  {
    routing: 'bezel-ring',
    piece: 'Sapphire bezel ring, size N',
    params: { metal: 'gold-18ct', stoneCount: 1, stoneSizeMm: 6 },
    customer: 'Leonie Ashgrove',
    priority: 3,
    startsBack: 6,
    takenBefore: 4,
    steps: {
      band: { who: 'Priya', bench: 'Forge & soldering station', pace: 1.12 },
      bezel: { who: 'Priya', bench: 'Forge & soldering station', pace: 0.9 },
      file: { who: 'Jonah', bench: 'Fabrication bench 1', pace: 1.25 },
      set: { who: 'Ines', bench: 'Setting bench A', pace: 1.1 },
      polish: { who: 'Ruth', bench: 'Polishing station', pace: 0.95 },
      inspect: { who: 'Sam', bench: 'Fabrication bench 2', pace: 1.3 },
    },
    collected: { after: 1, deposit: 'bank-transfer', balance: 'cash' },
  },
]

/** Its own seeded generator (tray times, the hour outside work comes back), so the rest of the demo draws what it drew before. */
function rng(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** A payment to record once the orders are priced (seed-costing.ts prices them from their cost). */
export interface RecentPayment {
  orderId: number
  purpose: 'deposit' | 'balance'
  method: Method
  at: Date
  note: string
}

type Row = { personId: number; benchId: number; start: number; end: number; endReason: string; note: string }

/** Books the last fortnight's job bags; answers the payments to record after costing. */
export async function seedRecentWork(desk: HistoryDesk): Promise<RecentPayment[]> {
  const { tx, workshopId, clock, nowMinute, workshopOpen } = desk
  const rand = rng(20261203)
  const zone = clock.timeZone
  const localDay = (m: number) => dayjs(clock.toDate(m)).tz(zone).format('YYYY-MM-DD')
  // Working days up to now (the last may be today), each with its open spans.
  const spansOf = new Map<string, Interval[]>()
  for (const iv of workshopOpen) if (iv.start < nowMinute) spansOf.set(localDay(iv.start), [...(spansOf.get(localDay(iv.start)) ?? []), iv])
  const workDays = [...spansOf.keys()].sort()
  const last = workDays.length - 1
  /** The moment `offset` open minutes into a working day (its last open minute when the day has fewer). */
  const openMoment = (day: string, offset: number) => {
    let left = offset
    const spans = spansOf.get(day)!
    for (const sp of spans) {
      if (left < sp.end - sp.start) return sp.start + left
      left -= sp.end - sp.start
    }
    return spans.at(-1)!.end - 1
  }
  const openFrom = (m: number) => {
    const iv = workshopOpen.find((x) => x.end > m)
    return iv ? Math.max(m, iv.start) : null
  }
  const dayIndexOf = (m: number) => workDays.indexOf(localDay(m))

  const people = await tx.select().from(s.people).where(eq(s.people.workshopId, workshopId))
  const skills = await tx
    .select()
    .from(s.personSkills)
    .where(
      inArray(
        s.personSkills.personId,
        people.map((p) => p.id),
      ),
    )
  const benches = await tx.select().from(s.benches).where(eq(s.benches.workshopId, workshopId))
  const customers = await tx.select().from(s.customers).where(eq(s.customers.workshopId, workshopId))
  const kinds = await tx.select().from(s.operationKinds).where(eq(s.operationKinds.workshopId, workshopId))
  const routings = await tx.select().from(s.routings).where(eq(s.routings.workshopId, workshopId))
  const steps = await tx
    .select()
    .from(s.routingSteps)
    .where(
      inArray(
        s.routingSteps.routingId,
        routings.map((r) => r.id),
      ),
    )
  const personNamed = (first: string) => people.find((p) => p.name.startsWith(`${first} `))!
  const benchNamed = (name: string) => benches.find((b) => b.name === name)!

  type Planned = {
    job: Job
    created: number
    records: Map<string, Row[]>
    finished: Map<string, number>
    sent: Map<string, number>
    lastEnd: number
    closedAt: number | null
    status: 'collected' | 'ready' | 'in-work'
  }
  const planned: Planned[] = []
  for (const job of JOBS) {
    const routing = routings.find((r) => r.code === job.routing)!
    const rsteps = steps.filter((st) => st.routingId === routing.id).sort((a, b) => a.seq - b.seq)
    const params = { ...desk.defaultParams, ...job.params }
    for (let earlier = 0; ; earlier++) {
      const startIdx = last - job.startsBack - earlier
      // Nowhere for it before the older history's own last weeks: the demo does without it.
      if (startIdx - job.takenBefore < 0 || earlier > 8) break
      const created = openMoment(workDays[startIdx - job.takenBefore]!, 30 + Math.floor(rand() * 300))
      const start = openMoment(workDays[startIdx]!, 0)
      const mark = new Map(people.flatMap((p) => [`p${p.id}`, ...benches.map((b) => `b${b.id}`)]).map((k) => [k, desk.busyOf(k).length]))
      const undo = () => {
        for (const [k, n] of mark) desk.busyOf(k).length = n
      }
      const finished = new Map<string, number>()
      const sent = new Map<string, number>()
      const records = new Map<string, Row[]>()
      let benchDone = start
      let fits = true
      for (const st of rsteps) {
        const after = Math.max(start, ...st.after.map((k) => finished.get(k)! + rsteps.find((x) => x.key === k)!.waitAfterMinutes))
        const tray = 10 + Math.floor(rand() * 50)
        if (kinds.find((k) => k.id === st.kindId)!.outside || st.leadDays > 0) {
          // Sent out when the piece is ready for it; back on the working day its lead time (and any delay) comes to.
          const out = openFrom(after + tray)
          const outIdx = out === null ? -1 : dayIndexOf(out)
          const backDay = workDays[outIdx + st.leadDays + (job.late?.[st.key] ?? 0)]
          const back = out === null || outIdx < 0 || !backDay ? null : openMoment(backDay, 60 + Math.floor(rand() * 240))
          if (back === null || back >= nowMinute) {
            fits = false
            break
          }
          sent.set(st.key, out!)
          finished.set(st.key, back)
          continue
        }
        const plan = job.steps[st.key]
        if (!plan) throw new Error(`the demo's ${job.routing} has no one for its step ${st.key}`)
        const person = personNamed(plan.who)
        const bench = benchNamed(plan.bench)
        const speed = skills.find((k) => k.personId === person.id && k.kindId === st.kindId)?.speed ?? 1
        const minutes = Math.max(3, Math.round((routingStepMinutes(st, routing, params) / speed) * plan.pace))
        // Bench work follows the bench work before it (one piece moves from bench to bench); outside work runs beside it.
        const ready = Math.max(after, benchDone) + tray
        const parts = plan.pause ? [Math.round(minutes * plan.pause.after), minutes - Math.round(minutes * plan.pause.after)] : [minutes]
        const rows: Row[] = []
        let from = ready
        for (const [i, m] of parts.entries()) {
          const pieces = desk.book(person.id, bench.id, from, m)
          if (!pieces) {
            fits = false
            break
          }
          desk.busyOf(`p${person.id}`).push(...pieces)
          desk.busyOf(`b${bench.id}`).push(...pieces)
          const lastPart = i === parts.length - 1
          pieces.forEach((p, j) => {
            const end = j === pieces.length - 1
            rows.push({
              personId: person.id,
              benchId: bench.id,
              start: p.start,
              end: p.end,
              endReason: !end ? desk.pauseReason(person.id, p, pieces[j + 1]!) : lastPart ? 'finished' : plan.pause!.reason,
              note: end && !lastPart ? (plan.pause!.note ?? '') : '',
            })
          })
          const stopped = pieces.at(-1)!.end
          from =
            plan.pause?.back === 'next-day'
              ? clock.at(dayjs(clock.toDate(stopped)).tz(zone).add(1, 'day').format('YYYY-MM-DD'))
              : stopped + (plan.pause?.back ?? 0)
        }
        if (!fits) break
        records.set(st.key, rows)
        benchDone = rows.at(-1)!.end
        finished.set(st.key, benchDone)
      }
      const lastEnd = Math.max(...finished.values())
      let closedAt: number | null = null
      let status: Planned['status'] = 'in-work'
      if (fits && job.collected) {
        // Collected in the middle of a working day after it was finished.
        const day = workDays[dayIndexOf(lastEnd) + job.collected.after]
        closedAt = day ? openMoment(day, 120 + Math.floor(rand() * 240)) : null
        if (closedAt === null || closedAt >= nowMinute) fits = false
        status = 'collected'
      } else if (fits) {
        // The office marks it ready once the bag is back from inspection; finished too late for that, it is still in work.
        const at = openFrom(lastEnd + 20 + Math.floor(rand() * 60))
        if (at !== null && at < nowMinute) [closedAt, status] = [at, 'ready']
      }
      if (!fits) {
        undo()
        continue
      }
      planned.push({ job, created, records, finished, sent, lastEnd, closedAt, status })
      break
    }
  }

  // Numbered in the order they were taken, as the app numbers orders.
  const payments: RecentPayment[] = []
  for (const p of planned.sort((a, b) => a.created - b.created)) {
    const customer = customers.find((c) => c.name === p.job.customer)!
    // Due a week after it was finished, on a weekday.
    let due = dayjs(clock.toDate(p.lastEnd)).tz(zone).add(7, 'day')
    while (due.isoWeekday() > 5) due = due.subtract(1, 'day')
    const { order, ops } = await desk.makeOrder({
      due: new Date(`${due.format('YYYY-MM-DD')}T12:00:00Z`),
      status: p.status,
      created: clock.toDate(p.created),
      finished: true,
      pick: { routing: p.job.routing, piece: p.job.piece, params: p.job.params, customerId: customer.id, priority: p.job.priority },
    })
    const rows = ops.flatMap((op) =>
      (p.records.get(op.key) ?? []).map((r) => ({
        operationId: op.id,
        personId: r.personId,
        benchId: r.benchId,
        startedAt: clock.toDate(r.start).toISOString(),
        endedAt: clock.toDate(r.end).toISOString(),
        endReason: r.endReason,
        note: r.note,
        createdAt: clock.toDate(r.start),
      })),
    )
    await tx.insert(s.timeRecords).values(rows)
    for (const op of ops) {
      const mine = p.records.get(op.key)
      const out = p.sent.get(op.key)
      await tx
        .update(s.operations)
        .set({
          finishedAt: clock.toDate(p.finished.get(op.key)!).toISOString(),
          // The bench and person it was done at; outside work keeps the moment it left, as sending it out does.
          ...(mine ? { plannedBenchId: mine.at(-1)!.benchId, plannedPersonId: mine.at(-1)!.personId } : {}),
          ...(out !== undefined ? { plannedStart: clock.toDate(out).toISOString() } : {}),
        })
        .where(eq(s.operations.id, op.id))
    }
    await tx
      .update(s.orders)
      .set({ updatedAt: clock.toDate(p.closedAt ?? p.lastEnd) })
      .where(and(eq(s.orders.id, order.id), eq(s.orders.workshopId, workshopId)))
    const deposit = p.job.collected?.deposit ?? p.job.deposit
    if (deposit)
      payments.push({
        orderId: order.id,
        purpose: 'deposit',
        method: deposit,
        at: clock.toDate(p.created),
        note: deposit === 'cash' ? 'Deposit paid when the order was taken' : 'Deposit by bank transfer',
      })
    if (p.job.collected && p.closedAt !== null)
      payments.push({
        orderId: order.id,
        purpose: 'balance',
        method: p.job.collected.balance,
        at: clock.toDate(p.closedAt),
        note: 'Balance paid on collection',
      })
  }
  return payments
}

/** Records the payments of the last fortnight against the orders' prices: the deposit the workshop asks, and the rest on collection. */
export async function seedRecentPayments(tx: Trx, o: { workshopId: number; recordedBy: number; payments: RecentPayment[] }) {
  if (!o.payments.length) return
  const [w] = await tx.select().from(s.workshops).where(eq(s.workshops.id, o.workshopId))
  const orders = await tx
    .select()
    .from(s.orders)
    .where(
      inArray(
        s.orders.id,
        o.payments.map((p) => p.orderId),
      ),
    )
  // Each payment under the workshop's VAT terms when it was taken, the balance carrying the rest of the price's VAT, as
  // recording it in the app does (`paymentVat`).
  const earlier = new Map<number, PaidWithVat[]>()
  await tx.insert(s.payments).values(
    o.payments.map((p) => {
      const price = orders.find((x) => x.id === p.orderId)!.priceQuotedMinor
      const deposit = Math.round((price * w!.depositPct) / 100)
      const amountMinor = p.purpose === 'deposit' ? deposit : price - deposit
      const terms = storedVatTerms(w!)
      const before = earlier.get(p.orderId) ?? []
      const vatMinor = paymentVat(amountMinor, terms, { priceMinor: price, earlier: before })
      earlier.set(p.orderId, [...before, { amountMinor, vatMinor, ...terms }])
      return {
        workshopId: o.workshopId,
        orderId: p.orderId,
        method: p.method,
        purpose: p.purpose,
        amountMinor,
        currency: w!.currency,
        ...terms,
        vatMinor,
        note: p.note,
        recordedBy: o.recordedBy,
        receivedAt: p.at.toISOString(),
        createdAt: p.at,
      }
    }),
  )
}
