// The demo workshop (an invented scenario): benches, people, routings, open orders, a history of actual times and, written step by
// step, its last two working weeks (seed-recent.ts).
import { count, eq, sql } from 'drizzle-orm'
import { routingStepMinutes } from '../../shared/domain/estimate'
import type { PieceParams } from '../../shared/schemas/order'
import type { RoutingKind } from '../../shared/domain/routing-kinds'
import type { WorkSpan } from '../../shared/schemas/common'
import type { Db } from './client'
import * as s from './schema/index'
import { hashPassword } from '../services/users'
import { seedMetal } from './seed-metal'
import { seedStones } from './seed-stones'
import { seedCosting } from './seed-costing'
import { seedRecentPayments, seedRecentWork, type OrderPick } from './seed-recent'
import { dayRange, dayjs, expandPattern, MinuteClock, subtract, type Interval } from '../lib/time'
import { englandWalesBankHolidaysBetween } from '../../shared/domain/bank-holidays'
import { storedVatTerms } from '../../shared/domain/vat'

export const DEMO_PASSWORD = 'millgrain-demo'
export const DEMO_USERS = [
  { email: 'owner@wrenfield.test', name: 'Margit Saale', role: 'owner' },
  { email: 'manager@wrenfield.test', name: 'Sam Ottery', role: 'manager' },
  { email: 'setter@wrenfield.test', name: 'Ines Harrowby', role: 'bench' },
  { email: 'trainee@wrenfield.test', name: 'Theo Brae', role: 'bench' },
  { email: 'priya@wrenfield.test', name: 'Priya Oduya', role: 'bench' },
  { email: 'jonah@wrenfield.test', name: 'Jonah Vell', role: 'bench' },
  { email: 'ruth@wrenfield.test', name: 'Ruth Calder', role: 'bench' },
  { email: 'sales@wrenfield.test', name: 'Lorna Pike', role: 'sales' },
] as const

/** Small seeded generator so the demo is the same on every machine. */
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

const WEEK: WorkSpan[] = [1, 2, 3, 4, 5].flatMap((weekday) => [
  { weekday, start: '08:30', end: '12:30' },
  { weekday, start: '13:15', end: '17:00' },
])

const KINDS = [
  { code: 'forging', name: 'Forging & laminating', hazards: ['torch'], color: '#b5653a' },
  { code: 'sawing', name: 'Sawing & piercing', hazards: [], color: '#8a7f5a' },
  { code: 'filing', name: 'Filing & fitting', hazards: [], color: '#7b8b6f' },
  { code: 'soldering', name: 'Soldering & pickling', hazards: ['torch', 'pickle'], color: '#c9772b' },
  { code: 'drilling', name: 'Drilling & seat cutting', hazards: [], color: '#5b7f95' },
  { code: 'setting', name: 'Stone setting', hazards: [], color: '#4f5fa8' },
  { code: 'polishing', name: 'Polishing', hazards: ['lathe'], color: '#a0578a' },
  { code: 'etching', name: 'Etching & oxidising', hazards: ['acid'], color: '#3f8f7a' },
  { code: 'inspection', name: 'Inspection & packing', hazards: [], color: '#6d6d6d' },
  { code: 'casting', name: 'Casting (outside)', hazards: ['investment'], color: '#9c8c3c', outside: true },
  { code: 'hallmarking', name: 'Hallmarking (assay office)', hazards: [], color: '#8c6d3c', outside: true },
] as const
type KindCode = (typeof KINDS)[number]['code']

const BENCHES: { name: string; kind: string; kinds: KindCode[]; notes?: string }[] = [
  { name: 'Fabrication bench 1', kind: 'fabrication', kinds: ['sawing', 'filing', 'drilling', 'inspection'] },
  { name: 'Fabrication bench 2', kind: 'fabrication', kinds: ['sawing', 'filing', 'drilling', 'inspection'] },
  { name: 'Forge & soldering station', kind: 'hearth', kinds: ['forging', 'soldering'], notes: 'Torch, rolling mill, pickle pot' },
  { name: 'Drilling station', kind: 'drilling', kinds: ['drilling'], notes: 'Pillar drill and pendant motor' },
  { name: 'Setting bench A', kind: 'setting', kinds: ['setting', 'inspection'], notes: 'Stereo microscope, ball vice' },
  { name: 'Setting bench B', kind: 'setting', kinds: ['setting', 'inspection'], notes: 'Stereo microscope' },
  { name: 'Polishing station', kind: 'polishing', kinds: ['polishing'], notes: 'Two-spindle lathe with extraction' },
  { name: 'Acid & etch station', kind: 'wet', kinds: ['etching'], notes: 'Fume cupboard, eyewash' },
]

const PEOPLE: { user: string; name: string; rateMinor: number; skills: [KindCode, number, number][]; pattern?: WorkSpan[] }[] = [
  {
    user: 'setter@wrenfield.test',
    name: 'Ines Harrowby',
    rateMinor: 3800,
    skills: [
      ['setting', 3, 1.15],
      ['drilling', 2, 1],
      ['inspection', 3, 1],
    ],
  },
  {
    user: 'trainee@wrenfield.test',
    name: 'Theo Brae',
    rateMinor: 1800,
    skills: [
      ['setting', 1, 0.6],
      ['drilling', 2, 0.8],
      ['filing', 2, 0.9],
      ['polishing', 1, 0.8],
    ],
  },
  {
    user: 'priya@wrenfield.test',
    name: 'Priya Oduya',
    rateMinor: 3200,
    skills: [
      ['forging', 3, 1.1],
      ['sawing', 3, 1],
      ['filing', 3, 1],
      ['soldering', 3, 1.1],
      ['drilling', 2, 1],
      ['etching', 2, 1],
    ],
  },
  {
    user: 'jonah@wrenfield.test',
    name: 'Jonah Vell',
    rateMinor: 3000,
    skills: [
      ['forging', 2, 0.9],
      ['sawing', 3, 1.05],
      ['filing', 3, 1],
      ['soldering', 2, 0.95],
      ['drilling', 3, 1.1],
      ['polishing', 1, 0.8],
    ],
  },
  {
    user: 'ruth@wrenfield.test',
    name: 'Ruth Calder',
    rateMinor: 2600,
    skills: [
      ['polishing', 3, 1.1],
      ['etching', 2, 1],
      ['inspection', 2, 1],
      ['filing', 1, 0.8],
    ],
    // Four days a week.
    pattern: WEEK.filter((w) => w.weekday !== 5),
  },
  {
    user: 'manager@wrenfield.test',
    name: 'Sam Ottery',
    rateMinor: 3500,
    skills: [
      ['filing', 2, 0.9],
      ['sawing', 2, 0.9],
      ['polishing', 2, 0.9],
      ['inspection', 3, 1],
      ['soldering', 1, 0.8],
    ],
    // Mornings at the bench; afternoons planning.
    pattern: [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '08:30', end: '12:30' })),
  },
]

type Step = {
  key: string
  kind: KindCode
  name: string
  base: number
  perStone?: number
  perMm?: number
  bands?: { melee?: number; small?: number; large?: number }
  level?: number
  wait?: number
  lead?: number
  after?: string[]
}
// Setting: melee is fiddly to pick up and seat, larger stones need more metal moved for their seat (demo figures; minutes per
// stone and their bands have no published source and should be learned from actual times).
const SETTING_BANDS = { melee: 1.2, large: 1.5 }
const ROUTINGS: { code: string; name: string; description: string; kind?: RoutingKind; learningRate?: number; resizesRing?: boolean; steps: Step[] }[] = [
  {
    code: 'pave-pendant',
    name: 'Pavé pendant in laminated metal',
    description: 'Laminated silver/copper disc, bail soldered, pavé of small diamonds.',
    steps: [
      { key: 'laminate', kind: 'forging', name: 'Laminate and roll sheet', base: 90, level: 2 },
      { key: 'bail', kind: 'sawing', name: 'Saw and form bail', base: 25 },
      { key: 'pierce', kind: 'sawing', name: 'Saw outline', base: 40, after: ['laminate'] },
      { key: 'solder', kind: 'soldering', name: 'Solder bail', base: 30, wait: 20, level: 2, after: ['pierce', 'bail'] },
      { key: 'file', kind: 'filing', name: 'File and emery', base: 40, after: ['solder'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark at assay office', base: 0, lead: 4, after: ['file'] },
      { key: 'drill', kind: 'drilling', name: 'Drill and cut seats', base: 10, perStone: 1.5, after: ['hallmark'] },
      { key: 'set', kind: 'setting', name: 'Set pavé', base: 30, perStone: 7, bands: SETTING_BANDS, level: 2, after: ['drill'] },
      { key: 'polish', kind: 'polishing', name: 'Final polish', base: 35, after: ['set'] },
      { key: 'inspect', kind: 'inspection', name: 'Inspect and bag', base: 10, after: ['polish'] },
    ],
  },
  {
    code: 'bezel-ring',
    name: 'Bezel-set solitaire ring',
    description: 'Forged band with a soldered bezel cup.',
    steps: [
      { key: 'band', kind: 'forging', name: 'Forge band', base: 45 },
      { key: 'bezel', kind: 'soldering', name: 'Make and solder bezel', base: 40, wait: 20, level: 2, after: ['band'] },
      { key: 'file', kind: 'filing', name: 'File and clean up', base: 30, after: ['bezel'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['file'] },
      { key: 'set', kind: 'setting', name: 'Set stone in bezel', base: 45, perStone: 0, level: 2, after: ['hallmark'] },
      { key: 'polish', kind: 'polishing', name: 'Polish', base: 30, after: ['set'] },
      { key: 'inspect', kind: 'inspection', name: 'Inspect and bag', base: 10, after: ['polish'] },
    ],
  },
  {
    code: 'wedding-pair',
    name: 'Wedding band pair',
    description: 'Two cast bands, matched finish.',
    steps: [
      { key: 'cast', kind: 'casting', name: 'Cast bands (caster)', base: 0, lead: 5 },
      { key: 'file', kind: 'filing', name: 'Clean castings and size', base: 60, after: ['cast'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['file'] },
      { key: 'polish', kind: 'polishing', name: 'Polish and finish pair', base: 50, after: ['hallmark'] },
      { key: 'inspect', kind: 'inspection', name: 'Inspect and box', base: 10, after: ['polish'] },
    ],
  },
  {
    code: 'retip-claws',
    name: 'Repair: retip claws',
    description: 'Rebuild worn claws on a customer ring; check stones first.',
    kind: 'repair',
    steps: [
      { key: 'assess', kind: 'inspection', name: 'Assess and record stones', base: 15, level: 2 },
      { key: 'retip', kind: 'soldering', name: 'Retip claws', base: 15, perStone: 0, level: 3, wait: 15, after: ['assess'] },
      { key: 'file', kind: 'filing', name: 'Shape tips', base: 20, after: ['retip'] },
      { key: 'tighten', kind: 'setting', name: 'Tighten and check stones', base: 20, level: 2, after: ['file'] },
      { key: 'polish', kind: 'polishing', name: 'Polish', base: 20, after: ['tighten'] },
    ],
  },
  // Learning curve: each doubling of the run takes 85 % of the time per pair (a usual figure for repeated hand work; common practice, no source).
  {
    code: 'stud-run',
    name: 'Production run: stud earrings',
    description: 'Cast studs with soldered posts, per pair minutes.',
    kind: 'run',
    learningRate: 0.85,
    steps: [
      { key: 'cast', kind: 'casting', name: 'Cast tree (caster)', base: 0, lead: 5 },
      { key: 'clean', kind: 'filing', name: 'Cut off and clean', base: 5, after: ['cast'] },
      { key: 'post', kind: 'soldering', name: 'Solder posts', base: 4, wait: 20, after: ['clean'] },
      { key: 'polish', kind: 'polishing', name: 'Barrel and polish', base: 4, after: ['post'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['polish'] },
      { key: 'pack', kind: 'inspection', name: 'Pair and pack', base: 1.5, after: ['hallmark'] },
    ],
  },
  {
    code: 'ring-resize',
    name: 'Repair: ring resize',
    description: 'Cut, add or remove metal, solder, clean up.',
    kind: 'repair',
    resizesRing: true,
    steps: [
      { key: 'cut', kind: 'sawing', name: 'Cut shank', base: 10 },
      { key: 'solder', kind: 'soldering', name: 'Solder shank', base: 20, wait: 15, level: 2, after: ['cut'] },
      { key: 'file', kind: 'filing', name: 'True up and file', base: 15, after: ['solder'] },
      { key: 'polish', kind: 'polishing', name: 'Polish', base: 20, after: ['file'] },
    ],
  },
  {
    code: 'etched-cuff',
    name: 'Etched cuff',
    description: 'Sheet cuff with an etched pattern, oxidised recesses.',
    steps: [
      { key: 'blank', kind: 'sawing', name: 'Saw blank', base: 25 },
      { key: 'resist', kind: 'filing', name: 'Clean and apply resist', base: 30, after: ['blank'] },
      { key: 'etch', kind: 'etching', name: 'Etch pattern', base: 30, wait: 90, level: 2, after: ['resist'] },
      { key: 'form', kind: 'forging', name: 'Form cuff on mandrel', base: 35, after: ['etch'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['form'] },
      { key: 'oxidise', kind: 'etching', name: 'Oxidise and relieve', base: 25, after: ['hallmark'] },
      // Polishing grows with the cuff's length: 14 min + 0.1 min a millimetre (30 min for a 160 mm cuff; demo figures).
      { key: 'polish', kind: 'polishing', name: 'Polish highlights', base: 14, perMm: 0.1, after: ['oxidise'] },
    ],
  },
  {
    code: 'signet-ring',
    name: 'Signet ring',
    description: 'Cast signet, hand finished.',
    steps: [
      { key: 'cast', kind: 'casting', name: 'Cast (caster)', base: 0, lead: 5 },
      { key: 'file', kind: 'filing', name: 'Clean up and size', base: 50, after: ['cast'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['file'] },
      { key: 'polish', kind: 'polishing', name: 'Polish', base: 40, after: ['hallmark'] },
      { key: 'inspect', kind: 'inspection', name: 'Inspect and box', base: 10, after: ['polish'] },
    ],
  },
  {
    code: 'halo-ring',
    name: 'Halo engagement ring',
    description: 'Cast head and fabricated shank joined, centre and halo set.',
    steps: [
      { key: 'head', kind: 'casting', name: 'Cast halo head (caster)', base: 0, lead: 5 },
      { key: 'shank', kind: 'forging', name: 'Forge shank', base: 50, level: 2 },
      { key: 'join', kind: 'soldering', name: 'Solder head to shank', base: 40, wait: 20, level: 3, after: ['head', 'shank'] },
      { key: 'file', kind: 'filing', name: 'File and pre-polish', base: 45, after: ['join'] },
      { key: 'hallmark', kind: 'hallmarking', name: 'Hallmark', base: 0, lead: 3, after: ['file'] },
      { key: 'set', kind: 'setting', name: 'Set centre and halo', base: 40, perStone: 8, bands: SETTING_BANDS, level: 3, after: ['hallmark'] },
      { key: 'polish', kind: 'polishing', name: 'Final polish', base: 40, after: ['set'] },
      { key: 'inspect', kind: 'inspection', name: 'Inspect and box', base: 15, after: ['polish'] },
    ],
  },
  {
    code: 'chain-repair',
    name: 'Repair: chain link',
    description: 'Solder a broken link, clean up.',
    kind: 'repair',
    steps: [
      { key: 'solder', kind: 'soldering', name: 'Solder link', base: 20, wait: 15 },
      { key: 'polish', kind: 'polishing', name: 'Clean and polish', base: 15, after: ['solder'] },
    ],
  },
]

const CUSTOMERS = [
  'Aldous Fenwright',
  'Bea Tamsworth',
  'Corin Oakhill',
  'Delphine Marsh-Idle',
  'Emrys Calloway',
  'Farah Quillon',
  'Gideon Pellow',
  'Hana Brightwater',
  'Ivo Stannard',
  'Juno Halvergate',
  'Kasimir Dunlow',
  'Leonie Ashgrove',
  'Milo Trevenna',
  'Nell Wetherby',
  'Orla Finchcombe',
  'Pascal Rooke',
]

const PIECES: Record<string, { piece: string; params: Partial<PieceParams> }[]> = {
  'pave-pendant': [
    { piece: 'Laminated disc pendant, 18 pavé', params: { metal: 'mixed', stoneCount: 18, stoneSizeMm: 1.5, sizeMm: 22 } },
    { piece: 'Pavé moon pendant', params: { metal: 'silver-925', stoneCount: 12, stoneSizeMm: 1.3, sizeMm: 18 } },
  ],
  'bezel-ring': [
    { piece: 'Sapphire bezel ring, size N', params: { metal: 'gold-18ct', stoneCount: 1, stoneSizeMm: 6 } },
    { piece: 'Moonstone bezel ring', params: { metal: 'silver-925', stoneCount: 1, stoneSizeMm: 8 } },
  ],
  'wedding-pair': [
    { piece: 'Court bands 3 mm and 5 mm', params: { metal: 'platinum-950', quantity: 1 } },
    { piece: 'D-shape bands, brushed', params: { metal: 'gold-18ct', finish: 'brushed' } },
  ],
  'retip-claws': [
    { piece: 'Six-claw solitaire: retip', params: { metal: 'gold-18ct', stoneCount: 6 } },
    { piece: 'Trilogy ring: retip four claws', params: { metal: 'platinum-950', stoneCount: 4 } },
  ],
  'stud-run': [
    { piece: 'Seed studs, 40 pairs', params: { metal: 'silver-925', quantity: 40 } },
    { piece: 'Knot studs, 25 pairs', params: { metal: 'gold-9ct', quantity: 25 } },
  ],
  'ring-resize': [
    { piece: 'Resize L to N', params: { metal: 'gold-9ct' } },
    { piece: 'Resize Q to O', params: { metal: 'silver-925' } },
  ],
  'etched-cuff': [{ piece: 'Fern-etched cuff', params: { metal: 'silver-925', sizeMm: 160, finish: 'oxidised' } }],
  'signet-ring': [{ piece: 'Oval signet, plain face', params: { metal: 'gold-9ct' } }],
  'halo-ring': [
    { piece: 'Oval halo, 14 stones', params: { metal: 'platinum-950', stoneCount: 15, stoneSizeMm: 1.5 } },
    { piece: 'Round halo, 18 stones', params: { metal: 'gold-18ct', stoneCount: 19, stoneSizeMm: 1.3 } },
  ],
  'chain-repair': [{ piece: 'Belcher chain, broken link', params: { metal: 'gold-9ct' } }],
}

const DEFAULT_PARAMS: PieceParams = { metal: 'silver-925', stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, finish: 'polished', quantity: 1 }
const dayStr = (d: Date) => d.toISOString().slice(0, 10)
const addDays = (d: Date, n: number) => new Date(d.getTime() + n * 86_400_000)
/** The same day, or the Monday after when it falls on a weekend. */
const weekday = (d: Date) => (d.getUTCDay() === 6 ? addDays(d, 2) : d.getUTCDay() === 0 ? addDays(d, 1) : d)

export async function isSeeded(db: Db) {
  const [r] = await db.select({ n: count() }).from(s.workshops)
  return (r?.n ?? 0) > 0
}

/** Seeds the demo workshop once; returns false when data exists already. */
export async function seedDemo(db: Db, o: { now?: Date } = {}): Promise<boolean> {
  if (await isSeeded(db)) return false
  const now = o.now ?? new Date()
  const rand = rng(20261202)
  const hash = await hashPassword(DEMO_PASSWORD)
  await db.transaction(async (tx) => {
    const [w] = await tx
      .insert(s.workshops)
      .values({
        name: 'Wrenfield Street Workshop',
        timeZone: 'Europe/London',
        weekPattern: WEEK,
        address: '14 Wrenfield Street, Bristol BS1 4QX',
        phone: '0117 496 0321',
        contactEmail: 'orders@wrenfield.test',
        currency: 'GBP',
      })
      .returning()
    const workshopId = w!.id
    const kinds = await tx
      .insert(s.operationKinds)
      .values(
        KINDS.map((k) => ({ workshopId, code: k.code, name: k.name, hazards: [...k.hazards], color: k.color, outside: 'outside' in k ? k.outside : false })),
      )
      .returning()
    const kindId = (c: KindCode) => kinds.find((k) => k.code === c)!.id
    const users = await tx
      .insert(s.users)
      .values(DEMO_USERS.map((u) => ({ workshopId, email: u.email, name: u.name, role: u.role, passwordHash: hash })))
      .returning()
    const benches = await tx
      .insert(s.benches)
      .values(BENCHES.map((b) => ({ workshopId, name: b.name, kind: b.kind, notes: b.notes ?? '' })))
      .returning()
    await tx.insert(s.benchCapabilities).values(BENCHES.flatMap((b, i) => b.kinds.map((k) => ({ benchId: benches[i]!.id, kindId: kindId(k) }))))
    const polishing = benches.find((b) => b.kind === 'polishing')!
    const downStart = weekday(addDays(now, 9))
    downStart.setUTCHours(8, 30, 0, 0)
    await tx.insert(s.benchDowntime).values({
      benchId: polishing.id,
      startsAt: downStart.toISOString(),
      endsAt: new Date(downStart.getTime() + 4 * 3600_000).toISOString(),
      reason: 'Lathe service and extraction filter change',
    })
    const people = await tx
      .insert(s.people)
      .values(
        PEOPLE.map((p) => ({
          workshopId,
          name: p.name,
          userId: users.find((u) => u.email === p.user)!.id,
          hourlyRateMinor: p.rateMinor,
          weekPattern: p.pattern ?? null,
        })),
      )
      .returning()
    await tx
      .insert(s.personSkills)
      .values(PEOPLE.flatMap((p, i) => p.skills.map(([k, level, speed]) => ({ personId: people[i]!.id, kindId: kindId(k), level, speed }))))
    const l1 = addDays(now, 12)
    await tx.insert(s.leave).values({ personId: people[2]!.id, startsOn: dayStr(l1), endsOn: dayStr(addDays(l1, 2)), reason: 'Holiday' })
    const stocktake = dayStr(weekday(addDays(now, 17)))
    await tx.insert(s.closures).values({ workshopId, name: 'Workshop closed: stocktake', startsOn: stocktake, endsOn: stocktake })
    // The demo workshop is in England: its bank holidays over the seeded history and the months ahead are closures too.
    const holidays = englandWalesBankHolidaysBetween(dayStr(addDays(now, -120)), dayStr(addDays(now, 180))).filter((h) => h.date !== stocktake)
    if (holidays.length)
      await tx.insert(s.closures).values(holidays.map((h) => ({ workshopId, name: `Bank holiday: ${h.name}`, startsOn: h.date, endsOn: h.date })))

    const routings: { row: typeof s.routings.$inferSelect; steps: (typeof s.routingSteps.$inferSelect)[] }[] = []
    for (const t of ROUTINGS) {
      const [row] = await tx
        .insert(s.routings)
        .values({
          workshopId,
          code: t.code,
          name: t.name,
          description: t.description,
          kind: t.kind ?? 'piece',
          learningRate: t.learningRate ?? null,
          resizesRing: t.resizesRing ?? false,
        })
        .returning()
      const steps = await tx
        .insert(s.routingSteps)
        .values(
          t.steps.map((st, seq) => ({
            routingId: row!.id,
            seq,
            key: st.key,
            kindId: kindId(st.kind),
            name: st.name,
            baseMinutes: st.base,
            perStoneMinutes: st.perStone ?? 0,
            perMmMinutes: st.perMm ?? 0,
            sizeBandFactors: st.bands ?? {},
            requiredLevel: st.level ?? 1,
            waitAfterMinutes: st.wait ?? 0,
            leadDays: st.lead ?? 0,
            after: st.after ?? [],
          })),
        )
        .returning()
      routings.push({ row: row!, steps })
    }
    const customers = await tx
      .insert(s.customers)
      .values(
        CUSTOMERS.map((name, i) => ({
          workshopId,
          reference: `C-${String(i + 1).padStart(4, '0')}`,
          name,
          email: `${name.split(' ')[0]!.toLowerCase()}@example.com`,
          phone: `01632 960${String(100 + i).slice(-3)}`,
        })),
      )
      .returning()

    let orderNo = 0
    /** An order with one job bag: its routing by `tIndex` and the rest drawn, or all of it as picked (drawing nothing). */
    const makeOrder = async (opts: { due: Date; status: string; created: Date; tIndex?: number; pick?: OrderPick; finished?: boolean }) => {
      orderNo++
      const pick = opts.pick
      const t = pick ? routings.find((r) => r.row.code === pick.routing)! : routings[opts.tIndex! % routings.length]!
      const choices = PIECES[t.row.code]!
      const choice = pick ?? choices[Math.floor(rand() * choices.length)]!
      const params = { ...DEFAULT_PARAMS, ...choice.params }
      const finished = opts.finished ?? opts.status === 'collected'
      // Numbered by the year the order was taken in the workshop's time zone, as the app numbers a new one (not the year it is due).
      const number = `MG${dayjs(opts.created).tz('Europe/London').format('YY')}-${String(orderNo).padStart(4, '0')}`
      const [order] = await tx
        .insert(s.orders)
        .values({
          workshopId,
          number,
          customerId: pick ? pick.customerId : customers[Math.floor(rand() * customers.length)]!.id,
          title: choice.piece,
          dueDate: dayStr(opts.due),
          priority: pick ? pick.priority : 1 + Math.floor(rand() * 5),
          status: opts.status,
          // A picked order is priced from its cost with the rest (seed-costing.ts).
          priceQuotedMinor: pick ? 0 : Math.round(150 + rand() * 2400) * 100,
          // Under the workshop's VAT terms, as an order taken through the app is.
          ...storedVatTerms(w!),
          depositPct: w!.depositPct,
          createdAt: opts.created,
        })
        .returning()
      const [bag] = await tx
        .insert(s.jobBags)
        .values({
          workshopId,
          orderId: order!.id,
          number: `${number}-1`,
          piece: choice.piece,
          routingId: t.row.id,
          routingKind: t.row.kind,
          params,
          status: finished ? 'complete' : 'waiting',
          createdAt: opts.created,
        })
        .returning()
      const ops = await tx
        .insert(s.operations)
        .values(
          t.steps.map((st) => ({
            jobBagId: bag!.id,
            seq: st.seq,
            key: st.key,
            kindId: st.kindId,
            name: st.name,
            requiredLevel: st.requiredLevel,
            waitAfterMinutes: st.waitAfterMinutes,
            leadDays: st.leadDays,
            after: st.after,
            estimateMinutes: st.leadDays > 0 ? 0 : routingStepMinutes(st, t.row, params),
            estimateSource: 'routing',
            status: finished ? 'done' : st.after.length ? 'pending' : 'ready',
          })),
        )
        .returning()
      return { order: order!, bag: bag!, ops, routing: t }
    }

    // History: finished orders over the past fourteen weeks, with time records for estimating. It keeps to the calendar the
    // demo itself sets: every record lies in its person's working time (their own pattern, else the workshop's open hours,
    // less closures and their leave); a person and a bench do one thing at a time; work stops at a break or the end of the
    // day and goes on when they are back; outside work comes back on a working day; and nothing ends after `now`.
    const zone = w!.timeZone
    const weekdayNear = (days: number) => {
      let d = dayjs(now).tz(zone).add(days, 'day')
      while (d.isoWeekday() > 5 || holidays.some((h) => h.date === d.format('YYYY-MM-DD'))) d = d.add(1, 'day')
      return d.format('YYYY-MM-DD')
    }
    // Days off in the past too, so the history has some to keep to.
    const trainingDay = weekdayNear(-40)
    await tx.insert(s.closures).values({ workshopId, name: 'Workshop closed: training day', startsOn: trainingDay, endsOn: trainingDay })
    const jonahAway = weekdayNear(-24)
    await tx
      .insert(s.leave)
      .values({ personId: people[3]!.id, startsOn: jonahAway, endsOn: dayjs(jonahAway).add(3, 'day').format('YYYY-MM-DD'), reason: 'Holiday' })

    const HISTORY_DAYS = 98
    const clock = new MinuteClock(
      zone,
      dayjs(now)
        .tz(zone)
        .subtract(HISTORY_DAYS + 7, 'day')
        .format('YYYY-MM-DD'),
    )
    const days = clock.days(HISTORY_DAYS + 9)
    const nowMinute = Math.floor((now.getTime() - clock.originMs) / 60_000)
    const localDay = (m: number) => dayjs(clock.toDate(m)).tz(zone).format('YYYY-MM-DD')
    const iso = (m: number) => clock.toDate(m).toISOString()
    const closedDays = (await tx.select().from(s.closures).where(eq(s.closures.workshopId, workshopId))).map((c) => dayRange(clock, c.startsOn, c.endsOn))
    const workshopOpen = subtract(expandPattern(clock, WEEK, days), closedDays)
    const leaveRows = await tx.select().from(s.leave)
    const openOf = new Map(
      people.map((p) => [
        p.id,
        intersect(
          subtract(
            expandPattern(clock, p.weekPattern ?? WEEK, days),
            leaveRows.filter((l) => l.personId === p.id).map((l) => dayRange(clock, l.startsOn, l.endsOn)),
          ),
          workshopOpen,
        ),
      ]),
    )
    const openDays = [...new Set(workshopOpen.map((iv) => localDay(iv.start)))]
    const busy = new Map<string, Interval[]>()
    const busyOf = (k: string) => busy.get(k) ?? busy.set(k, []).get(k)!
    /** The first `minutes` a person can give at a bench from `ready` on, in pieces of their free working time; null when not done by now. */
    const book = (personId: number, benchId: number, ready: number, minutes: number): Interval[] | null => {
      const open = openOf
        .get(personId)!
        .filter((iv) => iv.end > ready)
        .map((iv) => ({ start: Math.max(iv.start, ready), end: iv.end }))
      const free = subtract(
        open,
        [...busyOf(`p${personId}`), ...busyOf(`b${benchId}`)].filter((b) => b.end > ready),
      )
      const pieces: Interval[] = []
      let left = minutes
      for (const f of free) {
        if (left <= 0 || f.start >= nowMinute) break
        const take = Math.min(left, f.end - f.start)
        // Nobody starts a job in a gap of a few minutes.
        if (!pieces.length && take < Math.min(left, 20)) continue
        pieces.push({ start: f.start, end: f.start + take })
        left -= take
      }
      return left > 0 || pieces.at(-1)!.end > nowMinute ? null : pieces
    }
    /** Why a piece of work stopped before the next: a break or the end of the person's day, else another job took them away. */
    const pauseReason = (personId: number, piece: Interval, next: Interval) =>
      !openOf.get(personId)!.some((iv) => iv.end === piece.end) ? 'called-away' : localDay(piece.end) === localDay(next.start) ? 'break' : 'end-of-day'
    /** A moment inside the open hours of the n-th working day after the day of `sent`; null when not before now. */
    const returnAfter = (sent: number, n: number) => {
      const day = openDays.filter((d) => d > localDay(sent))[n - 1]
      const spans = workshopOpen.filter((iv) => localDay(iv.start) === day)
      if (!spans.length) return null
      const span = spans[Math.floor(rand() * spans.length)]!
      const m = span.start + Math.floor(rand() * (span.end - span.start))
      return m < nowMinute ? m : null
    }
    /** The first open minute of the workshop at or after m. */
    const openFrom = (m: number) => {
      const iv = workshopOpen.find((x) => x.end > m)
      return iv ? Math.max(m, iv.start) : null
    }

    const skilled = (kind: number, level: number) =>
      PEOPLE.map((p, i) => ({ p, id: people[i]!.id, skill: p.skills.find(([k]) => kindId(k) === kind) })).filter((x) => x.skill && x.skill[1] >= level)
    const benchFor = (kind: number) => BENCHES.map((b, i) => ({ b, id: benches[i]!.id })).filter((x) => x.b.kinds.some((k) => kindId(k) === kind))
    let historyOps = 0
    for (let i = 0; historyOps < 300; i++) {
      // Orders are taken in open hours, about one every working day and a bit.
      const createdAt = openFrom(Math.floor((now.getTime() - (HISTORY_DAYS - i * 1.3) * 86_400_000 - clock.originMs) / 60_000) + Math.floor(rand() * 90))
      if (createdAt === null || createdAt >= nowMinute) break
      const created = clock.toDate(createdAt)
      const { order, ops } = await makeOrder({ due: addDays(created, 21), status: 'collected', created, tIndex: i })
      const mark = new Map([...busy].map(([k, v]) => [k, v.length]))
      const done: { id: number; finishedAt: number; sent?: number; who?: { personId: number; benchId: number; pieces: Interval[] } }[] = []
      const skipped: number[] = []
      let ready = createdAt
      let fits = true
      for (const op of ops) {
        if (op.leadDays > 0) {
          // Outside work goes out once the piece is ready, while the workshop is open, and comes back after its lead days in
          // working days from then, now and then a day or two late.
          const r = rand()
          const sent = openFrom(ready)
          const back = sent === null ? null : returnAfter(sent, op.leadDays + (r < 0.55 ? 0 : r < 0.85 ? 1 : 2))
          if (back === null) {
            fits = false
            break
          }
          done.push({ id: op.id, finishedAt: back, sent: sent! })
          ready = back
          continue
        }
        const who = skilled(op.kindId, op.requiredLevel)
        const where = benchFor(op.kindId)
        const person = who[Math.floor(rand() * who.length)]
        const bench = where[Math.floor(rand() * where.length)]
        // A step nobody in the demo can do (or no bench can host) is left out of the finished job, not finished by no one.
        if (!person || !bench) {
          skipped.push(op.id)
          continue
        }
        // Actual = estimate ÷ speed × noise (log-normal-ish), with an occasional job that went badly and took two to four times as long.
        const noise = Math.exp((rand() + rand() + rand() - 1.5) * 0.35) * 1.08
        let actual = (op.estimateMinutes / person.skill![2]) * noise
        if (rand() < 0.03) actual *= 2 + rand() * 2
        actual = Math.max(3, Math.round(actual))
        const pieces = book(person.id, bench.id, ready, actual)
        if (!pieces) {
          fits = false
          break
        }
        busyOf(`p${person.id}`).push(...pieces)
        busyOf(`b${bench.id}`).push(...pieces)
        const end = pieces.at(-1)!.end
        done.push({ id: op.id, finishedAt: end, who: { personId: person.id, benchId: bench.id, pieces } })
        // The next step waits for the step's own wait (pickling, resist drying) and a while in the tray.
        ready = end + op.waitAfterMinutes + Math.round(10 + rand() * 110)
      }
      if (!fits) {
        // The last order would not be finished by now: it is not part of the history.
        for (const [k, v] of busy) v.length = mark.get(k) ?? 0
        await tx.delete(s.orders).where(eq(s.orders.id, order.id))
        orderNo--
        break
      }
      const records = done.flatMap((d) =>
        d.who
          ? d.who.pieces.map((p, j, all) => ({
              operationId: d.id,
              personId: d.who!.personId,
              benchId: d.who!.benchId,
              startedAt: iso(p.start),
              endedAt: iso(p.end),
              endReason: j === all.length - 1 ? 'finished' : pauseReason(d.who!.personId, p, all[j + 1]!),
              createdAt: clock.toDate(p.start),
            }))
          : [],
      )
      if (records.length) await tx.insert(s.timeRecords).values(records)
      for (const d of done) {
        await tx
          .update(s.operations)
          .set({
            finishedAt: iso(d.finishedAt),
            ...(d.who ? { plannedBenchId: d.who.benchId, plannedPersonId: d.who.personId } : {}),
            // Outside work keeps the moment it left, as sending it out does (`sendOut`): its working days away ran from there.
            ...(d.sent !== undefined ? { plannedStart: iso(d.sent), plannedBenchId: null, plannedPersonId: null } : {}),
          })
          .where(eqId(d.id))
        if (d.who) historyOps++
      }
      for (const id of skipped) await tx.update(s.operations).set({ status: 'skipped' }).where(eqId(id))
      // Collected once the last step was done.
      await tx
        .update(s.orders)
        .set({ updatedAt: clock.toDate(Math.max(...done.map((d) => d.finishedAt))) })
        .where(eq(s.orders.id, order.id))
    }
    // The last two working weeks: job bags finished step by step up to now, booked around the history above.
    const recentPayments = await seedRecentWork({
      tx,
      workshopId,
      clock,
      nowMinute,
      workshopOpen,
      defaultParams: DEFAULT_PARAMS,
      busyOf,
      book,
      pauseReason,
      makeOrder,
    })
    // Open work: 30 orders due over the next four weeks, taken over the last ten days while the workshop was open.
    const takenIn = intersect(workshopOpen, [{ start: nowMinute - 10 * 1440, end: nowMinute }])
    const lastOpen = workshopOpen.filter((iv) => iv.start < nowMinute).at(-1)
    /** The moment a share `r` (0 to 1) of the way through the open time of the last ten days (the last open minute when there is none). */
    const takenAt = (r: number) => {
      let left = Math.floor(r * takenIn.reduce((t, iv) => t + iv.end - iv.start, 0))
      for (const iv of takenIn) {
        if (left < iv.end - iv.start) return iv.start + left
        left -= iv.end - iv.start
      }
      return lastOpen ? Math.min(lastOpen.end, nowMinute) - 1 : nowMinute
    }
    for (let i = 0; i < 30; i++) {
      let due = addDays(now, 5 + Math.floor((i * 23) / 30) + Math.floor(rand() * 4))
      // Customers collect on working days: a due date on a weekend moves to the Friday before.
      while (due.getUTCDay() === 0 || due.getUTCDay() === 6) due = addDays(due, -1)
      await makeOrder({ due, status: 'open', created: clock.toDate(takenAt(rand())), tIndex: i * 7 + 3 })
    }
    // Open orders were last changed when they were taken (not when the demo was written, which may be after the clock it was given).
    await tx
      .update(s.orders)
      .set({ updatedAt: sql`${s.orders.createdAt}` })
      .where(eq(s.orders.status, 'open'))
    await seedMetal(tx, { workshopId, now })
    await seedStones(tx, workshopId)
    await seedCosting(tx, workshopId)
    await seedRecentPayments(tx, { workshopId, recordedBy: users.find((u) => u.role === 'sales')!.id, payments: recentPayments })
  })
  return true
}

const eqId = (id: number) => eq(s.operations.id, id)

/** Where two sorted lists of disjoint intervals overlap. */
function intersect(a: Interval[], b: Interval[]): Interval[] {
  const out: Interval[] = []
  let j = 0
  for (const x of a) {
    while (j < b.length && b[j]!.end <= x.start) j++
    for (let k = j; k < b.length && b[k]!.start < x.end; k++) {
      const start = Math.max(x.start, b[k]!.start),
        end = Math.min(x.end, b[k]!.end)
      if (end > start) out.push({ start, end })
    }
  }
  return out
}
