// The printable job ticket: a real PDF (read back with pdf-parse) with number, routing, cautions, no customer contact data, and a QR that decodes to the bag's link.
import { PDFParse } from 'pdf-parse'
import jsQR from 'jsqr'
import { PNG } from 'pngjs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { HAZARD_CAUTIONS, HAZARD_FOOTER } from '../../shared/domain/status'
import { jobBagLink, ticketQrPng } from '../../server/services/tickets'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { expectCleanError } from './helpers'

let t: TestApp
let manager: Agent
let bag: { id: number; number: string; customer_name: string; email: string; phone: string; reference: string }

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  // A job bag with a soldering step (torch and pickle hazards).
  const { rows } = await t.pool.query(`
    select jb.id, jb.number, c.name as customer_name, c.email, c.phone, c.reference from job_bags jb join orders o on o.id = jb.order_id join customers c on c.id = o.customer_id
    where o.status = 'open' and exists (select 1 from operations op join operation_kinds k on k.id = op.kind_id where op.job_bag_id = jb.id and k.code = 'soldering')
    order by jb.id limit 1`)
  bag = rows[0]
})
afterAll(async () => { await t?.close() })

const binary = (r: import('supertest').Request) => r.buffer(true).parse((res, cb) => {
  const chunks: Buffer[] = []
  res.on('data', (c: Buffer) => chunks.push(c))
  res.on('end', () => cb(null, Buffer.concat(chunks)))
})

/** Decodes a QR code from PNG bytes with jsqr (an independent reader). */
function decodeQr(png: Buffer | Uint8Array): string | null {
  const img = PNG.sync.read(Buffer.from(png))
  return jsQR(new Uint8ClampedArray(img.data.buffer, img.data.byteOffset, img.data.length), img.width, img.height)?.data ?? null
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
    const steps = (await t.pool.query('select name from operations where job_bag_id = $1', [bag.id])).rows
    for (const s of steps) expect(text.replace(/\s+/g, ' ')).toContain(s.name)
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

  it('when the QR image is taken out of the PDF and read by jsqr, then it is the absolute link to the job bag page', async () => {
    const parser = new PDFParse({ data: new Uint8Array(pdf) })
    const images = await parser.getImage({ imageThreshold: 0 })
    await parser.destroy()
    const img = images.pages[0]!.images[0]!
    expect(decodeQr(img.data)).toBe(`http://workshop.example:8080/job-bags/${bag.id}`)
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
