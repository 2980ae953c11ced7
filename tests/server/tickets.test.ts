// The printable job ticket: a real PDF (read back with pdf-parse) with number, routing, cautions, no customer contact data,
// names instead of codes, the stones counted as the setting estimate counts them, the print time in the workshop's zone, and a QR that decodes to the bag's link at the workshop's public address.
import { networkInterfaces } from 'node:os'
import { inflateSync } from 'node:zlib'
import { PDFParse } from 'pdf-parse'
import jsQR from 'jsqr'
import { PNG } from 'pngjs'
import dayjs from 'dayjs'
import timezone from 'dayjs/plugin/timezone.js'
import utc from 'dayjs/plugin/utc.js'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { HAZARD_CAUTIONS, HAZARD_FOOTER } from '../../shared/domain/status'
import { jobBagLink, jobTicketPdf, ticketQrPng } from '../../server/services/tickets'
import { suggestPublicUrl } from '../../server/lib/public-url'
import { and, asc, eq, exists, inArray, ne } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { benchIdByName, routingId } from '../setup/fixtures'
import { expectCleanError, expectFieldError } from './helpers'

dayjs.extend(utc)
dayjs.extend(timezone)

// The workshop's public address in these tests: a reserved example name (RFC 2606), never contacted.
const PUBLIC_URL = 'https://millgrain.wrenfield.example'

let t: TestApp
let manager: Agent
let owner: Agent
let bag: {
  id: number
  number: string
  customer_name: string
  email: string
  phone: string
  reference: string
  params: (typeof s.jobBags.$inferSelect)['params']
}
let benchName: string

/** Sets the workshop's public address through the owner's settings API (version read first). */
async function setPublicUrl(publicUrl: string) {
  const w = (await owner.get('/api/workshop')).body
  const r = await owner.put('/api/workshop', { ...w, publicUrl, version: w.version })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r
}

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  owner = await signedIn(t.app, 'owner')
  // A job bag with a soldering step (torch and pickle hazards).
  const soldering = t.db
    .select({ id: s.operations.id })
    .from(s.operations)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(and(eq(s.operations.jobBagId, s.jobBags.id), eq(s.operationKinds.code, 'soldering')))
  const [found] = await t.db
    .select({
      id: s.jobBags.id,
      number: s.jobBags.number,
      params: s.jobBags.params,
      customer_name: s.customers.name,
      email: s.customers.email,
      phone: s.customers.phone,
      reference: s.customers.reference,
    })
    .from(s.jobBags)
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
    .where(and(eq(s.orders.status, 'open'), exists(soldering)))
    .orderBy(asc(s.jobBags.id))
    .limit(1)
  bag = found!
  // The piece is platinum, and its first open step is planned at a bench, so the ticket has a metal and a bench to name.
  await t.db
    .update(s.jobBags)
    .set({ params: { ...found!.params, metal: 'platinum-950' } })
    .where(eq(s.jobBags.id, bag.id))
  const [b] = await t.db
    .select({ id: s.benches.id, name: s.benches.name })
    .from(s.benches)
    .where(and(eq(s.benches.workshopId, 1), eq(s.benches.active, true)))
    .orderBy(asc(s.benches.id))
    .limit(1)
  benchName = b!.name
  const [first] = await t.db
    .select({ id: s.operations.id })
    .from(s.operations)
    .where(and(eq(s.operations.jobBagId, bag.id), ne(s.operations.status, 'skipped')))
    .orderBy(asc(s.operations.seq), asc(s.operations.id))
    .limit(1)
  await t.db.update(s.operations).set({ plannedBenchId: b!.id }).where(eq(s.operations.id, first!.id))
  await setPublicUrl(PUBLIC_URL)
})
afterAll(async () => {
  await t?.close()
})

const binary = (r: import('supertest').Request) =>
  r.buffer(true).parse((res, cb) => {
    const chunks: Buffer[] = []
    res.on('data', (c: Buffer) => chunks.push(c))
    res.on('end', () => cb(null, Buffer.concat(chunks)))
  })

/** Decodes a QR code from PNG bytes with jsqr (an independent reader). */
function decodeQr(png: Buffer | Uint8Array): string | null {
  const img = PNG.sync.read(Buffer.from(png))
  return jsQR(new Uint8ClampedArray(img.data.buffer, img.data.byteOffset, img.data.length), img.width, img.height)?.data ?? null
}

/** The text of a PDF (pdf-parse) with runs of white space made one space. */
async function pdfText(pdf: Buffer): Promise<string> {
  const parser = new PDFParse({ data: new Uint8Array(pdf) })
  const text = (await parser.getText()).text
  await parser.destroy()
  return text.replace(/\s+/g, ' ')
}

/**
 * Every run of text a PDF prints, with its font size, in the order drawn: each Flate-compressed stream inflated with node's zlib,
 * and in it each text object (BT … ET) read by the PDF operators for the font and size (Tf) and the strings shown (TJ, Tj) —
 * ISO 32000-1 §7.4.4 and §9.4. pdfkit writes the standard fonts' strings as hex in WinAnsi, which is Latin-1 for these letters.
 */
function pdfTextRuns(pdf: Buffer): { size: number; text: string }[] {
  const raw = pdf.toString('latin1')
  const runs: { size: number; text: string }[] = []
  for (const m of raw.matchAll(/stream\r?\n/g)) {
    const from = m.index + m[0].length
    let content: string
    try {
      content = inflateSync(pdf.subarray(from, raw.indexOf('endstream', from))).toString('latin1')
    } catch {
      continue // not Flate-compressed
    }
    if (!/ Tf\b/.test(content)) continue // no text in it (the QR code's pixels)
    for (const [, block] of content.matchAll(/\bBT\b([\s\S]*?)\bET\b/g)) {
      const size = Number(block!.match(/\/\w+ ([\d.]+) Tf/)?.[1])
      const text = [...block!.matchAll(/<([0-9a-fA-F]*)>/g)].map(([, hex]) => Buffer.from(hex!, 'hex').toString('latin1')).join('')
      if (text) runs.push({ size, text })
    }
  }
  return runs
}
/** The runs from the routing's heading to the safety cautions (or the end): the steps as printed. */
const routingRuns = (pdf: Buffer) => {
  const runs = pdfTextRuns(pdf)
  const from = runs.findIndex((r) => r.text === 'Routing')
  const to = runs.findIndex((r) => r.text === 'Safety cautions')
  return runs.slice(from + 1, to === -1 ? undefined : to)
}

/** The QR code printed on a ticket: the first image of page 1, read by jsqr. */
async function pdfQr(pdf: Buffer): Promise<string | null> {
  const parser = new PDFParse({ data: new Uint8Array(pdf) })
  const images = await parser.getImage({ imageThreshold: 0 })
  await parser.destroy()
  return decodeQr(images.pages[0]!.images[0]!.data)
}

describe('job ticket PDF', () => {
  let pdf: Buffer
  let text: string
  beforeAll(async () => {
    const r = await binary(manager.get(`/api/job-bags/${bag.id}/ticket.pdf`).set('host', 'workshop.example:8080'))
    expect(r.status).toBe(200)
    expect(r.headers['content-type']).toBe('application/pdf')
    pdf = r.body as Buffer
    const parser = new PDFParse({ data: new Uint8Array(pdf) })
    text = (await parser.getText()).text
    await parser.destroy()
  })

  it('when printed, then it is a PDF of A6 size with the job bag number, the customer reference and the routing', async () => {
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    // A6 is 105 × 148 mm = 297.64 × 419.53 pt (ISO 216).
    expect(pdf.toString('latin1')).toMatch(/\/MediaBox \[0 0 297\.64 419\.53\]/)
    expect(text).toContain(bag.number)
    expect(text).toContain(bag.reference)
    const steps = await t.db.select({ name: s.operations.name }).from(s.operations).where(eq(s.operations.jobBagId, bag.id))
    for (const step of steps) expect(text.replace(/\s+/g, ' ')).toContain(step.name)
  })

  it('when the routing has room on the page, then its steps print at the usual 8.5 pt, their kind of work on the line under', async () => {
    const runs = routingRuns(pdf)
    const ops = await t.db
      .select({ name: s.operations.name, kind: s.operationKinds.name })
      .from(s.operations)
      .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
      .where(and(eq(s.operations.jobBagId, bag.id), ne(s.operations.status, 'skipped')))
      .orderBy(asc(s.operations.seq), asc(s.operations.id))
    ops.forEach((op, i) => {
      const at = runs.findIndex((r) => r.text.startsWith(`${i + 1}. `))
      expect(runs[at], op.name).toMatchObject({ size: 8.5 })
      expect(runs[at + 1]!.text, op.name).toMatch(new RegExp(`^${op.kind.replace(/[()]/g, '\\$&')}`))
    })
  })

  it('when a step is hazardous, then its cautions and the footer are printed', () => {
    const flat = text.replace(/\s+/g, ' ')
    // Caution texts: shared/domain/status.ts, after HSE INDG297 (torch) and University of Vermont "Fine Metals Safety" (pickle), see TRADE.md.
    expect(flat).toContain(HAZARD_CAUTIONS.torch.slice(0, 60))
    expect(flat).toContain(HAZARD_CAUTIONS.pickle.slice(0, 40))
    expect(flat).toContain(HAZARD_FOOTER.slice(0, 30))
  })

  it('when printed, then the customer’s name, e-mail and phone are not on it', () => {
    expect(text).not.toContain(bag.customer_name)
    expect(text).not.toContain(bag.email)
    expect(text).not.toContain(bag.phone)
  })

  it('when the QR image is taken out of the PDF and read by jsqr, then it is the workshop’s public address and the job bag page, not the address it was printed from', async () => {
    expect(await pdfQr(pdf)).toBe(`${PUBLIC_URL}/job-bags/${bag.id}`)
    expect(text.replace(/\s+/g, '')).toContain(`${PUBLIC_URL}/job-bags/${bag.id}`)
    expect(text).not.toContain('workshop.example:8080')
  })

  it('when the piece is platinum, then the ticket names the metal, the operation kinds and the planned bench, and prints no codes', async () => {
    const flat = text.replace(/\s+/g, ' ')
    // The name the workshop uses for platinum-950 (common practice, no source: "Platinum 950" is how the trade writes Pt 950).
    expect(flat).toContain('Platinum 950')
    expect(flat).not.toContain('platinum-950')
    const kinds = await t.db
      .selectDistinct({ code: s.operationKinds.code, name: s.operationKinds.name })
      .from(s.operations)
      .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
      .where(and(eq(s.operations.jobBagId, bag.id), ne(s.operations.status, 'skipped')))
    for (const k of kinds) {
      expect(flat).toContain(k.name)
      if (k.code !== k.name && /-/.test(k.code)) expect(flat).not.toContain(k.code)
    }
    expect(flat).toContain(benchName)
  })

  it('when printed, then the print time is in the workshop’s zone (named) and within a minute of now there', () => {
    const flat = text.replace(/\s+/g, ' ')
    // The demo workshop is in Europe/London; the abbreviation is GMT in winter and BST in summer (Summer Time Order, UTC+1 from the last Sunday in March).
    const m = flat.match(/Printed (\d{4}-\d{2}-\d{2} \d{2}:\d{2}) (GMT|BST) \(Europe\/London\)/)
    expect(m, flat).not.toBeNull()
    // dayjs with its timezone plugin reads the printed local time back to a moment.
    const printed = dayjs.tz(m![1]!, 'YYYY-MM-DD HH:mm', 'Europe/London')
    expect(Math.abs(printed.valueOf() - Date.now())).toBeLessThan(2 * 60_000)
    expect(m![2]).toBe(dayjs().tz('Europe/London').utcOffset() === 60 ? 'BST' : 'GMT')
  })

  it('when the ticket’s QR code path is used directly, then jsqr reads back the link', async () => {
    const link = jobBagLink('https://millgrain.example', bag.id)
    expect(decodeQr(await ticketQrPng(link))).toBe(`https://millgrain.example/job-bags/${bag.id}`)
  })

  it('when A5 is asked for, then the page is A5', async () => {
    const r = await binary(manager.get(`/api/job-bags/${bag.id}/ticket.pdf?size=A5`))
    // A5 is 148 × 210 mm = 419.53 × 595.28 pt (ISO 216).
    expect((r.body as Buffer).toString('latin1')).toMatch(/\/MediaBox \[0 0 419\.53 595\.28\]/)
  })

  it('when sales asks for a ticket, then 403; a bench user may print; an unknown bag is 404; a bad size is 400', async () => {
    const sales = await signedIn(t.app, 'sales')
    expectCleanError(await sales.get(`/api/job-bags/${bag.id}/ticket.pdf`), 403)
    const bench = await signedIn(t.app, 'bench')
    expect((await binary(bench.get(`/api/job-bags/${bag.id}/ticket.pdf`))).status).toBe(200)
    expectCleanError(await manager.get('/api/job-bags/999999/ticket.pdf'), 404)
    expectCleanError(await manager.get(`/api/job-bags/${bag.id}/ticket.pdf?size=A3`), 400)
  })
})

describe('the stones a ticket counts', () => {
  /** Takes an order for one pavé pendant with these piece figures (through the API, so every step's planned minutes are the app's own). */
  async function orderPavePendant(params: { stoneCount: number; stoneSizeMm: number; quantity: number }): Promise<number> {
    const [customer] = await t.db.select({ id: s.customers.id }).from(s.customers).where(eq(s.customers.workshopId, 1)).orderBy(asc(s.customers.id)).limit(1)
    const routing = await routingId(t.db, 'pave-pendant')
    const r = await manager.post('/api/orders', {
      customerId: customer!.id,
      title: 'Pavé pendants',
      dueDate: '2031-03-14',
      // The piece's routing by both its wire names (routingId, formerly templateId); the schema drops the one it does not know.
      pieces: [{ routingId: routing, templateId: routing, piece: 'Pavé disc pendant', params: { metal: 'silver-925', sizeMm: 22, ...params } }],
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    return (r.body as { jobBags: { id: number }[] }).jobBags[0]!.id
  }
  const ticketText = async (jobBagId: number) => pdfText((await jobTicketPdf(t.db, 1, jobBagId, { size: 'A6', requestOrigin: 'http://127.0.0.1:9' })).pdf)
  /** The planned minutes printed beside these steps, in the order given: "8. Set pavé … 312 min" → '312 min'. */
  const printedMinutes = (flat: string, names: string[]) =>
    names.map((n) => flat.match(new RegExp(`\\d+\\. ${n} (?:\\(!\\) )?.*?(\\d+ min|\\d+ working days?)`))?.[1])

  it('when the piece figures say 12 × 1.3 mm a piece × 2 pieces and the bag’s stone list 18 × 1.5 mm, then the ticket counts the list (36 stones), names the figures and never says 24', async () => {
    // The order is taken with 12 stones of 1.3 mm a piece and 2 pieces; the bag's own stone list then says 18 pavé of 1.5 mm.
    const id = await orderPavePendant({ stoneCount: 12, stoneSizeMm: 1.3, quantity: 2 })
    const added = await manager.post(`/api/job-bags/${id}/stones`, { role: 'pave', sizeMm: 1.5, count: 18 })
    expect(added.status, JSON.stringify(added.body)).toBe(201)
    const flat = await ticketText(id)
    // Hand-worked: the list counts, a line's count is per piece and the pieces come from the figures:
    // 18 a piece × 2 pieces = 36 stones (the figures would give 12 × 2 = 24).
    expect(flat).toContain('Sterling silver 925 · 2 pieces · 36 stones (18 a piece)')
    // From the metal and quantity to the routing: every stone figure the ticket prints (the due date and print time lie outside).
    const stoneFacts = flat.match(/Metal \/ qty (.*?) Routing /)?.[1] ?? ''
    expect(stoneFacts, flat).toContain('36 stones')
    expect(stoneFacts).not.toMatch(/\b24\b/)
    expect(stoneFacts).not.toMatch(/\b12 stones\b/)
    expect(stoneFacts).toContain('Stones — Pavé: 18 × 1.5 mm round diamond')
    expect(stoneFacts).toContain("Counted from this list; the order's figures say 12 × 1.3 mm a piece.")
    // The planned minutes printed beside the steps, hand-worked from the seeded pavé pendant routing (server/db/seed.ts; demo
    // figures, no learning curve): per piece × 2 pieces; drilling (base 10 + 1.5 a stone, no size bands) and setting (base 30 +
    // 7 a stone; melee below 1.5 mm × 1.2, none for 1.5–3 mm; pavé role factor 1, common practice, no source) follow the list:
    //   drill (10 + 1.5 × 18) × 2 = 37 × 2 = 74;  set (30 + 7 × 18) × 2 = 156 × 2 = 312
    //   (from the figures they would be (10 + 1.5 × 12) × 2 = 56 and (30 + 7 × 12 × 1.2) × 2 = 261.6)
    //   laminate 90 × 2 = 180, bail 25 × 2 = 50, outline 40 × 2 = 80, solder 30 × 2 = 60, file 40 × 2 = 80, polish 35 × 2 = 70, inspect 10 × 2 = 20
    const steps = ['Laminate and roll sheet', 'Saw and form bail', 'Saw outline', 'Solder bail', 'File and emery', 'Hallmark at assay office']
    steps.push('Drill and cut seats', 'Set pavé', 'Final polish', 'Inspect and bag')
    expect(printedMinutes(flat, steps), flat).toEqual([
      '180 min',
      '50 min',
      '80 min',
      '60 min',
      '80 min',
      '4 working days',
      '74 min',
      '312 min',
      '70 min',
      '20 min',
    ])
  })

  it('when a bag has no stone list, then the ticket counts the piece figures (14 a piece × 3 pieces = 42) and names no other count', async () => {
    const id = await orderPavePendant({ stoneCount: 14, stoneSizeMm: 1.25, quantity: 3 })
    expect(await t.db.select({ id: s.jobBagStones.id }).from(s.jobBagStones).where(eq(s.jobBagStones.jobBagId, id))).toEqual([])
    const flat = await ticketText(id)
    // Hand-worked: 14 stones a piece × 3 pieces = 42.
    expect(flat).toContain('Sterling silver 925 · 3 pieces · 42 stones (14 a piece)')
    expect(flat).not.toContain('Stones —')
    expect(flat).not.toContain('Counted from this list')
    // Drilling and setting from the figures: (10 + 1.5 × 14) × 3 = 31 × 3 = 93; (30 + 7 × 14 × 1.2) × 3 = 147.6 × 3 = 442.8 → 443 as printed.
    expect(printedMinutes(flat, ['Drill and cut seats', 'Set pavé']), flat).toEqual(['93 min', '443 min'])
  })

  it('when the demo’s claw retip (no stone list, 6 stones in its piece figures, one piece) is printed, then the ticket counts the figures: 1 piece · 6 stones', async () => {
    // The ticket bag of the first describe: the seeded "Six-claw solitaire: retip" (server/db/seed.ts: stoneCount 6, quantity left at 1; no list).
    expect(await t.db.select({ id: s.jobBagStones.id }).from(s.jobBagStones).where(eq(s.jobBagStones.jobBagId, bag.id))).toEqual([])
    expect(bag.params).toMatchObject({ stoneCount: 6 })
    const flat = await ticketText(bag.id)
    expect(flat).toMatch(/1 piece · 6 stones(?! \()/)
    expect(flat).not.toContain('Counted from this list')
  })
})

describe('ticket print time with a clock we hold', () => {
  it('when printed at 13:07 UTC on 15 July 2025 in London, then it reads 14:07 BST; in Sydney 23:07 that day; at 15:30 UTC in Sydney 01:30 the next day', async () => {
    const at = new Date('2025-07-15T13:07:00Z')
    // Hand-worked: London is on BST (UTC+1) from 30 March to 26 October 2025 (Summer Time Order: last Sundays of March and October).
    let flat = await pdfText((await jobTicketPdf(t.db, 1, bag.id, { size: 'A6', requestOrigin: 'http://127.0.0.1:9', now: at })).pdf)
    expect(flat).toContain('Printed 2025-07-15 14:07 BST (Europe/London)')
    expect(dayjs(at).tz('Europe/London').format('YYYY-MM-DD HH:mm')).toBe('2025-07-15 14:07')
    await t.db.update(s.workshops).set({ timeZone: 'Australia/Sydney' }).where(eq(s.workshops.id, 1))
    try {
      // Hand-worked: Sydney keeps AEST (UTC+10) in July; daylight time runs from the first Sunday in October (NSW Standard Time Act 1987).
      flat = await pdfText((await jobTicketPdf(t.db, 1, bag.id, { size: 'A6', requestOrigin: 'http://127.0.0.1:9', now: at })).pdf)
      expect(flat).toMatch(/Printed 2025-07-15 23:07 \S+ \(Australia\/Sydney\)/)
      const late = new Date('2025-07-15T15:30:00Z')
      flat = await pdfText((await jobTicketPdf(t.db, 1, bag.id, { size: 'A6', requestOrigin: 'http://127.0.0.1:9', now: late })).pdf)
      expect(flat).toMatch(/Printed 2025-07-16 01:30 \S+ \(Australia\/Sydney\)/)
      expect(dayjs(late).tz('Australia/Sydney').format('YYYY-MM-DD HH:mm')).toBe('2025-07-16 01:30')
    } finally {
      await t.db.update(s.workshops).set({ timeZone: 'Europe/London' }).where(eq(s.workshops.id, 1))
    }
  })
})

describe('the address a ticket’s QR code opens', () => {
  // A made-up machine: loopback, then an interface with only IPv6, then wired and wireless IPv4 (TEST-NET addresses, RFC 5737).
  const machine = {
    lo: [{ address: '127.0.0.1', netmask: '255.0.0.0', family: 'IPv4' as const, mac: '00:00:00:00:00:00', internal: true, cidr: '127.0.0.1/8' }],
    tun0: [
      {
        address: 'fd00::7',
        netmask: 'ffff:ffff:ffff:ffff::',
        family: 'IPv6' as const,
        mac: '00:00:00:00:00:00',
        internal: false,
        cidr: 'fd00::7/64',
        scopeid: 0,
      },
    ],
    eth0: [{ address: '192.0.2.20', netmask: '255.255.255.0', family: 'IPv4' as const, mac: '02:00:00:00:00:01', internal: false, cidr: '192.0.2.20/24' }],
    wlan0: [{ address: '198.51.100.7', netmask: '255.255.255.0', family: 'IPv4' as const, mac: '02:00:00:00:00:02', internal: false, cidr: '198.51.100.7/24' }],
  }

  it('when no address is set, then the suggestion is the first network IPv4 address with the server’s port, and says whether tablets can reach it', () => {
    expect(suggestPublicUrl(8080, '0.0.0.0', machine)).toEqual({ url: 'http://192.0.2.20:8080', reachable: true })
    // Listening on loopback only: the address is still the machine's, but a tablet cannot open it until HOST changes.
    expect(suggestPublicUrl(8080, '127.0.0.1', machine)).toEqual({ url: 'http://192.0.2.20:8080', reachable: false })
    // Listening on one named address: that one.
    expect(suggestPublicUrl(8080, '198.51.100.7', machine)).toEqual({ url: 'http://198.51.100.7:8080', reachable: true })
    expect(suggestPublicUrl(8080, '0.0.0.0', { lo: machine.lo })).toEqual({ url: null, reachable: true })
  })

  it('when the workshop has no public address, then the ticket’s QR opens the suggested network address; with none, the address it was printed from', async () => {
    await setPublicUrl('')
    try {
      const suggested = suggestPublicUrl(54321, '0.0.0.0', machine).url
      const r = await jobTicketPdf(t.db, 1, bag.id, { size: 'A6', requestOrigin: 'http://127.0.0.1:8080', suggestedOrigin: suggested })
      expect(await pdfQr(r.pdf)).toBe(`http://192.0.2.20:54321/job-bags/${bag.id}`)
      const none = await jobTicketPdf(t.db, 1, bag.id, { size: 'A6', requestOrigin: 'http://127.0.0.1:8080', suggestedOrigin: null })
      expect(await pdfQr(none.pdf)).toBe(`http://127.0.0.1:8080/job-bags/${bag.id}`)
      // Over HTTP: this machine's own first network IPv4 address (read here from os.networkInterfaces), with the port the test server got.
      const ip = Object.values(networkInterfaces())
        .flat()
        .find((a) => a && a.family === 'IPv4' && !a.internal)?.address
      const live = await binary(manager.get(`/api/job-bags/${bag.id}/ticket.pdf`).set('host', 'workshop.example:8080'))
      const qr = await pdfQr(live.body as Buffer)
      if (ip) expect(qr).toMatch(new RegExp(`^http://${ip.replace(/\./g, '\\.')}:\\d+/job-bags/${bag.id}$`))
      else expect(qr).toBe(`http://workshop.example:8080/job-bags/${bag.id}`)
    } finally {
      await setPublicUrl(PUBLIC_URL)
    }
  })
})

describe('the public address in the workshop settings', () => {
  it('when the owner saves an address with a path, a query, another scheme or no scheme, then 400 names publicUrl', async () => {
    const w = (await owner.get('/api/workshop')).body
    for (const bad of [
      'http://192.168.1.20:8080/millgrain',
      'http://192.168.1.20:8080/?t=1',
      'ftp://192.168.1.20',
      '192.168.1.20:8080',
      'https://user:pw@millgrain.example',
      'https://millgrain.example/#x',
    ]) {
      expectFieldError(await owner.put('/api/workshop', { ...w, publicUrl: bad }), 'publicUrl', /http:\/\/ or https:\/\/ address with no path/)
    }
    expect((await owner.get('/api/workshop')).body.publicUrl).toBe(PUBLIC_URL)
  })

  it('when the owner saves an address with a trailing slash and capitals, then it reads back as scheme, host and port; a change that leaves it out keeps it', async () => {
    const r = await setPublicUrl('HTTP://Bench-Server.Example:8443/')
    // WHATWG URL: scheme and host are lower-cased, the root path "/" is not part of the origin.
    expect(r.body.publicUrl).toBe('http://bench-server.example:8443')
    const w = (await owner.get('/api/workshop')).body
    expect(w.publicUrl).toBe('http://bench-server.example:8443')
    const again = await owner.put('/api/workshop', {
      name: w.name,
      timeZone: w.timeZone,
      weekPattern: w.weekPattern,
      planningLoad: w.planningLoad,
      version: w.version,
    })
    expect(again.body.publicUrl).toBe('http://bench-server.example:8443')
    await setPublicUrl(PUBLIC_URL)
  })

  it('when anyone reads the settings, then they carry the suggested address with the server’s port; only the owner may change them', async () => {
    const w = (await manager.get('/api/workshop')).body
    const ip = Object.values(networkInterfaces())
      .flat()
      .find((a) => a && a.family === 'IPv4' && !a.internal)?.address
    if (ip) expect(w.publicUrlSuggestion.url).toMatch(new RegExp(`^http://${ip.replace(/\./g, '\\.')}:\\d+$`))
    else expect(w.publicUrlSuggestion.url).toBeNull()
    // The test app's configuration keeps the default HOST (127.0.0.1): tablets could not reach the suggestion.
    expect(w.publicUrlSuggestion.reachable).toBe(false)
    expectCleanError(await manager.put('/api/workshop', { ...w, publicUrl: 'http://192.0.2.1' }), 403)
  })
})

describe('a long routing on an A6 ticket', () => {
  // Fourteen steps with the long names a workshop writes for a halo ring made by hand (the demo's run 15–25 characters; these
  // 41–51), torch, pickle and lathe work among them so their safety cautions print too, the customer's own centre stone and a
  // halo on the stone list, and a ring size.
  const STEPS: [key: string, kind: string, name: string][] = [
    ['anneal', 'forging', 'Anneal and draw down the square wire for the shank'],
    ['saw', 'sawing', 'Saw and pierce the gallery from the sheet'],
    ['form', 'filing', 'Form the shank on the triblet and true it'],
    ['close', 'soldering', 'Solder the shank closed, pickle and rinse'],
    ['file', 'filing', 'File the joins flush and emery the inside'],
    ['gallery', 'soldering', 'Solder the gallery to the shank with medium solder'],
    ['drill', 'drilling', 'Drill and cut the seats for the halo stones'],
    ['prepolish', 'polishing', 'Pre-polish the inside before the stones go in'],
    ['centre', 'setting', 'Set the centre stone and tighten the claws'],
    ['halo', 'setting', 'Set the halo and bright-cut the grain edges'],
    ['check', 'inspection', 'Check the stones for chips and the claws for snags'],
    ['hallmark', 'hallmarking', 'Hallmark at the assay office with the declaration'],
    ['polish', 'polishing', 'Final polish on the lathe, ultrasonic and steam'],
    ['inspect', 'inspection', 'Inspect, photograph, bag and label for collection'],
  ]
  let id: number

  beforeAll(async () => {
    const kinds = Object.fromEntries((await manager.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
    const routing = await manager.post('/api/routings', {
      code: 'halo-ring-long',
      name: 'Halo ring, made by hand',
      steps: STEPS.map(([key, kind, name], i) => ({
        key,
        kindId: kinds[kind],
        name,
        baseMinutes: kind === 'hallmarking' ? 0 : 30 + 5 * i,
        leadDays: kind === 'hallmarking' ? 4 : 0,
        after: i ? [STEPS[i - 1]![0]] : [],
      })),
    })
    expect(routing.status, JSON.stringify(routing.body)).toBe(201)
    const [customer] = await t.db.select({ id: s.customers.id }).from(s.customers).where(eq(s.customers.workshopId, 1)).orderBy(asc(s.customers.id)).limit(1)
    const order = await manager.post('/api/orders', {
      customerId: customer!.id,
      title: 'Halo ring',
      dueDate: '2031-03-14',
      pieces: [
        {
          routingId: routing.body.id,
          piece: 'Halo engagement ring in 18 ct white gold',
          params: { metal: 'gold-18ct', sizeMm: 18, ringSize: { scale: 'uk', value: 'M' }, stoneCount: 15, stoneSizeMm: 1.3 },
        },
      ],
    })
    expect(order.status, JSON.stringify(order.body)).toBe(201)
    id = (order.body as { jobBags: { id: number }[] }).jobBags[0]!.id
    for (const line of [
      { role: 'centre', sizeMm: 6.5, count: 1, customerOwned: true, quality: 'G VS1' },
      { role: 'halo', sizeMm: 1.3, count: 14 },
    ]) {
      const r = await manager.post(`/api/job-bags/${id}/stones`, line)
      expect(r.status, JSON.stringify(r.body)).toBe(201)
    }
    // The setting steps planned at the setter's bench, so their lines name it.
    await t.db
      .update(s.operations)
      .set({ plannedBenchId: await benchIdByName(t.db, 'Setting bench A') })
      .where(and(eq(s.operations.jobBagId, id), inArray(s.operations.key, ['centre', 'halo'])))
  })

  it('when a bag of 14 long-named steps is printed on A6, then it is one page with every step, the safety cautions, the QR code and no step under 6.5 pt', async () => {
    const { pdf } = await jobTicketPdf(t.db, 1, id, { size: 'A6', requestOrigin: 'http://127.0.0.1:9' })
    const parser = new PDFParse({ data: new Uint8Array(pdf) })
    const read = await parser.getText()
    await parser.destroy()
    expect(read.total, 'pages').toBe(1)
    const flat = read.text.replace(/\s+/g, ' ')
    STEPS.forEach(([, , name], i) => expect(flat).toContain(`${i + 1}. ${name}`))
    expect(flat).toContain('at Setting bench A')
    expect(flat).toContain(HAZARD_CAUTIONS.lathe.slice(0, 40))
    expect(flat).toContain(HAZARD_FOOTER.slice(0, 30))
    expect(await pdfQr(pdf)).toBe(`${PUBLIC_URL}/job-bags/${id}`)
    // Every step, its bench and its planned time in type of 6.5 pt or more, and smaller than the usual 8.5 pt.
    const runs = routingRuns(pdf)
    STEPS.forEach((_, i) => expect(runs.find((r) => r.text.startsWith(`${i + 1}. `))?.size).toBeLessThan(8.5))
    expect(runs.length).toBeGreaterThanOrEqual(STEPS.length * 2)
    for (const r of runs) expect(r.size, r.text).toBeGreaterThanOrEqual(6.5)
  })
})
