// A bench tablet over HTTPS with the workshop's own certificate (served on 127.0.0.1 only): Chromium trusts exactly that
// certificate, the camera opens because the page is a secure context, and scanning a printed ticket's QR opens its job bag.
import { createHash, X509Certificate } from 'node:crypto'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import jsQR from 'jsqr'
import { PDFParse } from 'pdf-parse'
import { PNG } from 'pngjs'
import type { Browser } from 'playwright-core'
import { afterAll, describe, expect, it } from 'vitest'
import { and, asc, eq, notInArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { DEMO_PASSWORD, launchChromium, screenshot, signInWith, useE2E } from '../setup/e2e'
import { qrVideo } from '../setup/qr-video'

let camera: Browser | null = null
const dir = mkdtempSync(join(tmpdir(), 'mg-lan-scan-'))
const tlsDir = join(dir, 'tls')

const e2e = useE2E({ env: { HOST: '127.0.0.1', TLS: '1', TLS_DIR: tlsDir } })
afterAll(async () => {
  await camera?.close().catch(() => undefined)
  rmSync(dir, { recursive: true, force: true })
})

/** The base64 SHA-256 of a certificate's public key (SPKI), the form Chromium's --ignore-certificate-errors-spki-list takes. */
const spkiHash = (pem: string) =>
  createHash('sha256')
    .update(new X509Certificate(pem).publicKey.export({ type: 'spki', format: 'der' }))
    .digest('base64')

/** The QR code printed on a ticket PDF: the first image of page 1 (pdf-parse), read by jsqr. */
async function ticketQr(pdf: Buffer): Promise<string | null> {
  const parser = new PDFParse({ data: new Uint8Array(pdf) })
  const images = await parser.getImage({ imageThreshold: 0 })
  await parser.destroy()
  const png = PNG.sync.read(Buffer.from(images.pages[0]!.images[0]!.data))
  return jsQR(new Uint8ClampedArray(png.data.buffer, png.data.byteOffset, png.data.length), png.width, png.height)?.data ?? null
}

describe('a bench tablet over https', () => {
  it('when the tablet trusts the workshop certificate and its camera sees a printed ticket, then the job bag opens', async () => {
    expect(e2e.url).toMatch(/^https:\/\/127\.0\.0\.1:\d+$/)
    // A job bag whose next step is ready, so its page offers that step (server/services/job-bags.ts: next = first 'ready').
    const ready = await e2e.db.db
      .select({ job_bag_id: s.operations.jobBagId, name: s.operations.name, number: s.jobBags.number, outside: s.operationKinds.outside })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
      .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
      .where(and(eq(s.operations.status, 'ready'), eq(s.orders.status, 'open'), notInArray(s.jobBags.status, ['on-hold', 'cancelled'])))
      .orderBy(asc(s.jobBags.number), asc(s.operations.seq))
    // Each bag's first ready step (its page offers that one), the first bag by number whose step is at a bench.
    const op = ready.filter((x, i) => ready.findIndex((y) => y.job_bag_id === x.job_bag_id) === i).find((x) => !x.outside)!
    expect(op, 'the seeded demo has a ready bench step').toBeTruthy()

    // Trust exactly the server certificate the app made (not every certificate error), as a tablet that installed the CA would.
    const serverCert = readFileSync(join(tlsDir, 'server.crt'), 'utf8')
    const video = join(dir, 'ticket.y4m')
    // The fake camera reads its file when the camera opens (after the ticket below is printed).
    camera = await launchChromium([
      '--use-fake-ui-for-media-stream',
      '--use-fake-device-for-media-stream',
      `--use-file-for-fake-video-capture=${video}`,
      `--ignore-certificate-errors-spki-list=${spkiHash(serverCert)}`,
    ])
    const context = await camera.newContext({
      baseURL: e2e.url,
      viewport: { width: 1280, height: 800 },
      locale: 'en-GB',
      timezoneId: 'Europe/London',
      hasTouch: true,
      permissions: ['camera'],
    })
    const page = await context.newPage()
    const problems: string[] = []
    page.on('console', (m) => {
      if (/Content Security Policy|Refused to|Mixed Content/i.test(m.text())) problems.push(m.text())
    })
    page.on('pageerror', (e) => problems.push(String(e)))
    await signInWith(page, 'setter@wrenfield.test', DEMO_PASSWORD)
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
    await expect(page.evaluate(() => ({ protocol: location.protocol, secure: window.isSecureContext }))).resolves.toEqual({ protocol: 'https:', secure: true })

    // The ticket as the tablet prints it, over the same https connection; its QR code read back from the PDF.
    const pdf = await page.evaluate(async (id) => {
      const r = await fetch(`/api/job-bags/${id}/ticket.pdf?size=A6`)
      const bytes = new Uint8Array(await r.arrayBuffer())
      let s = ''
      for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000))
      return { status: r.status, b64: btoa(s) }
    }, op!.job_bag_id)
    expect(pdf.status).toBe(200)
    const link = await ticketQr(Buffer.from(pdf.b64, 'base64'))
    // Printed over https, the ticket points at an https address (this machine's network address, or the one asked).
    expect(link).toMatch(new RegExp(`^https://[^/]+:${new URL(e2e.url).port}/job-bags/${op!.job_bag_id}$`))

    // First the camera sees some other code: the live picture shows in the dialog, which says it is no ticket.
    writeFileSync(video, qrVideo('https://example.invalid/not-a-ticket', { width: 640, height: 480, modulePx: 8, frames: 10 }))
    await page.goto('/bench')
    await page.locator('[data-test=scan]').click()
    await expect.poll(() => page.locator('[data-test=scan-dialog]').textContent(), { timeout: 30_000 }).toContain('That code is not a Millgrain job ticket.')
    await expect.poll(() => page.locator('[data-test=scan-dialog] video').evaluate((v: HTMLVideoElement) => v.videoWidth), { timeout: 10_000 }).toBe(640)
    await screenshot(page, 'lan-scan-01-camera-over-https', { fullPage: false })
    await page.keyboard.press('Escape')
    await page.locator('[data-test=scan-dialog]').waitFor({ state: 'hidden' })

    // Then the printed ticket.
    writeFileSync(video, qrVideo(link!, { width: 640, height: 480, modulePx: 8, frames: 10 }))
    await page.locator('[data-test=scan]').click()
    await page.locator('[data-test=scan-dialog] video').waitFor()
    await page
      .waitForURL((u) => u.pathname === `/job-bags/${op!.job_bag_id}` && u.searchParams.get('from') === 'scan', { timeout: 30_000 })
      .catch(async (err) => {
        await screenshot(page, 'lan-scan-failed', { fullPage: false })
        throw new Error(
          `${(err as Error).message}\nwhat the scan dialog said: ${await page
            .locator('[data-test=scan-dialog]')
            .textContent()
            .catch(() => '?')}\nconsole: ${problems.join(' | ')}`,
        )
      })
    await page.locator('[data-test=next-step]').waitFor()
    await expect(page.locator('[data-test=next-step]').textContent()).resolves.toContain(op!.name)
    expect(new URL(page.url()).protocol).toBe('https:')
    await screenshot(page, 'lan-scan-02-opened-over-https')
    expect(problems).toEqual([])
    await context.close()
  })
})
