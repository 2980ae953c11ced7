// Uploads: real PNG and PDF accepted (with a thumbnail for the image), disguised, oversize, empty, traversal and
// multiple uploads refused with a reason, nothing written outside the upload directory, other workshops see nothing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { PNG } from 'pngjs'
import PDFDocument from 'pdfkit'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { openOrder } from '../setup/fixtures'
import { expectCleanError, expectFieldError, secondWorkshop } from './helpers'

const MAX = 200_000
let t: TestApp
let root: string
let uploadDir: string
let sales: Agent
let orderId: number
let jobBagId: number

/** A real 40×30 PNG, drawn pixel by pixel with pngjs. */
function png(width = 40, height = 30): Buffer {
  const img = new PNG({ width, height })
  for (let i = 0; i < width * height; i++) img.data.set([(i * 7) % 256, 120, 200, 255], i * 4)
  return PNG.sync.write(img)
}
async function pdf(): Promise<Buffer> {
  const doc = new PDFDocument({ size: 'A6' })
  const parts: Buffer[] = []
  doc.on('data', (c: Buffer) => parts.push(c))
  const done = new Promise<Buffer>((r) => doc.on('end', () => r(Buffer.concat(parts))))
  doc.text('Sketch: bezel ring, 18ct, 3 × 2 mm stones')
  doc.end()
  return done
}
/** Every file under a directory, relative paths. */
function tree(dir: string): string[] {
  if (!existsSync(dir)) return []
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile())
    .map((d) => join(d.parentPath, d.name).slice(dir.length + 1))
    .sort()
}
const upload = (a: Agent, path: string) => a.agent.post(path).set('x-csrf-token', a.csrf)
/** A hand-written multipart body: client libraries strip folders from file names, a crafted request does not. */
function rawMultipart(a: Agent, path: string, filename: string, content: Buffer) {
  const boundary = '----millgrain-test-boundary'
  const body = Buffer.concat([
    Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${filename}"\r\nContent-Type: image/png\r\n\r\n`),
    content,
    Buffer.from(`\r\n--${boundary}--\r\n`),
  ])
  return upload(a, path).set('content-type', `multipart/form-data; boundary=${boundary}`).send(body)
}

beforeAll(async () => {
  root = mkdtempSync(join(tmpdir(), 'millgrain-files-'))
  uploadDir = join(root, 'uploads')
  t = await createTestApp({ UPLOAD_DIR: uploadDir, UPLOAD_MAX_BYTES: String(MAX) })
  sales = await signedIn(t.app, 'sales')
  const o = await openOrder(t.db)
  orderId = o.id
  jobBagId = o.bagId
})
afterAll(async () => {
  await t?.close()
  rmSync(root, { recursive: true, force: true })
})

describe('uploading files', () => {
  it('when sales uploads a real PNG sketch to an order, then it is stored under a generated name with a WebP thumbnail', async () => {
    const body = png()
    const r = await upload(sales, `/api/orders/${orderId}/files`)
      .field('kind', 'sketch')
      .attach('file', body, { filename: 'ring sketch é.png', contentType: 'image/png' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ kind: 'sketch', mime: 'image/png', size: body.length, width: 40, height: 30, originalName: 'ring sketch é.png' })
    expect(r.body.thumbnailUrl).toBe(`/api/files/${r.body.id}/thumbnail`)
    const files = tree(uploadDir)
    expect(files).toHaveLength(2)
    for (const f of files) expect(f).toMatch(/^[0-9a-f-]{36}(\.png|\.thumb\.webp)$/)
    const got = await sales.get(r.body.url).buffer(true)
    expect(got.status).toBe(200)
    expect(got.headers['content-type']).toBe('image/png')
    expect(got.headers['content-disposition']).toBe(`inline; filename="ring sketch _.png"; filename*=UTF-8''ring%20sketch%20%C3%A9.png`)
    expect(Buffer.compare(got.body as Buffer, body)).toBe(0)
    const thumb = await sales.get(r.body.thumbnailUrl).buffer(true)
    expect(thumb.status).toBe(200)
    expect(thumb.headers['content-type']).toBe('image/webp')
    // WebP container: "RIFF" … "WEBP" (RFC 9649).
    expect((thumb.body as Buffer).toString('latin1', 0, 4)).toBe('RIFF')
    expect((thumb.body as Buffer).toString('latin1', 8, 12)).toBe('WEBP')
    const list = await sales.get(`/api/orders/${orderId}/files`)
    expect(list.body.items.map((x: { id: number }) => x.id)).toContain(r.body.id)
  })

  it('when a manager uploads a PDF to a job bag, then it is kept without a thumbnail and downloads as an attachment', async () => {
    const manager = await signedIn(t.app, 'manager')
    const body = await pdf()
    // Magic bytes of a PDF: "%PDF-" (ISO 32000-1 §7.5.2).
    expect(body.toString('latin1', 0, 5)).toBe('%PDF-')
    const r = await upload(manager, `/api/job-bags/${jobBagId}/files`)
      .field('kind', 'reference')
      .attach('file', body, { filename: 'drawing.pdf', contentType: 'application/octet-stream' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ mime: 'application/pdf', thumbnailUrl: null, jobBagId })
    const got = await manager.get(r.body.url).buffer(true)
    expect(got.headers['content-type']).toBe('application/pdf')
    expect(got.headers['content-disposition']).toMatch(/^attachment; filename="drawing.pdf"/)
  })

  it('when the upload is disguised, too big, empty, has folders in its name or comes several at once, then it is refused with a reason and nothing is written', async () => {
    const before = tree(root)
    const text = Buffer.from('just some text, not a picture at all\n')
    expectFieldError(
      await upload(sales, `/api/orders/${orderId}/files`).attach('file', text, { filename: 'photo.png', contentType: 'image/png' }),
      'file',
      /JPEG, PNG or WebP image or a PDF/,
    )
    // A PNG signature followed by garbage: the signature alone is not enough.
    const broken = Buffer.concat([png().subarray(0, 8), Buffer.alloc(200, 7)])
    expectFieldError(
      await upload(sales, `/api/orders/${orderId}/files`).attach('file', broken, { filename: 'broken.png', contentType: 'image/png' }),
      'file',
      /readable image/,
    )
    const big = Buffer.concat([png().subarray(0, 8), Buffer.alloc(MAX + 10, 1)])
    const tooBig = await upload(sales, `/api/orders/${orderId}/files`).attach('file', big, { filename: 'big.png', contentType: 'image/png' })
    expectCleanError(tooBig, 413)
    expect(tooBig.body.fields.file).toMatch(/too large/)
    expectFieldError(
      await upload(sales, `/api/orders/${orderId}/files`).attach('file', Buffer.alloc(0), { filename: 'empty.png', contentType: 'image/png' }),
      'file',
      /empty/,
    )
    expectFieldError(await rawMultipart(sales, `/api/orders/${orderId}/files`, '../../etc/passwd.png', png()), 'file', /folders/)
    expectFieldError(await rawMultipart(sales, `/api/orders/${orderId}/files`, '..\\..\\boot.png', png()), 'file', /folders/)
    expectFieldError(
      await upload(sales, `/api/orders/${orderId}/files`).attach('file', png(), 'a.png').attach('file', png(), 'b.png'),
      'file',
      /one file at a time/,
    )
    expectFieldError(await upload(sales, `/api/orders/${orderId}/files`).field('kind', 'invoice').attach('file', png(), 'a.png'), 'kind')
    expectFieldError(await sales.post(`/api/orders/${orderId}/files`, { file: 'not multipart' }), 'file')
    expect(tree(root)).toEqual(before)
    expect(existsSync(resolve(uploadDir, '../../etc/passwd.png'))).toBe(false)
  })

  it('when a bench user adds a photo to a job bag, then progress photos are accepted and other kinds refused; orders’ files stay hidden', async () => {
    const bench = await signedIn(t.app, 'bench')
    const ok = await upload(bench, `/api/job-bags/${jobBagId}/files`).attach('file', png(), { filename: 'after-setting.png' })
    expect(ok.status, JSON.stringify(ok.body)).toBe(201)
    expect(ok.body.kind).toBe('progress')
    expectCleanError(await upload(bench, `/api/job-bags/${jobBagId}/files`).field('kind', 'sketch').attach('file', png(), 'x.png'), 403)
    expectCleanError(await upload(bench, `/api/orders/${orderId}/files`).attach('file', png(), 'x.png'), 403)
    const [orderFile] = await t.db.select({ id: s.files.id }).from(s.files).where(eq(s.files.orderId, orderId)).limit(1)
    expectCleanError(await bench.get(`/api/files/${orderFile!.id}`), 404)
    expectCleanError(await bench.delete(`/api/files/${ok.body.id}`), 403)
  })

  it('when another workshop’s user asks for a file by id, then it is not found', async () => {
    const other = await secondWorkshop(t, 'files')
    const f = (await t.db.select({ id: s.files.id }).from(s.files).where(eq(s.files.orderId, orderId)).limit(1))[0]!
    expectCleanError(await other.agent.get(`/api/files/${f.id}`), 404)
    expectCleanError(await other.agent.get(`/api/files/${f.id}/thumbnail`), 404)
    expectCleanError(await other.agent.get(`/api/orders/${orderId}/files`), 404)
    expectCleanError(await upload(other.agent, `/api/orders/${orderId}/files`).attach('file', png(), 'x.png'), 404)
    expectCleanError(await other.agent.delete(`/api/files/${f.id}`), 404)
  })

  it('when a manager removes a file, then it and its thumbnail leave the disk', async () => {
    const manager = await signedIn(t.app, 'manager')
    const r = await upload(manager, `/api/orders/${orderId}/files`).attach('file', png(), 'to-remove.png')
    const before = tree(uploadDir).length
    const d = await manager.delete(`/api/files/${r.body.id}`)
    expect(d.status).toBe(200)
    expect(tree(uploadDir).length).toBe(before - 2)
    expectCleanError(await manager.get(`/api/files/${r.body.id}`), 404)
  })
})
