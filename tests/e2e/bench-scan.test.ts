// Scanning a job ticket at the bench in Chromium: a fake camera shows a printed ticket's QR code and the job bag opens; typing the number works too.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { and, asc, eq, notInArray } from 'drizzle-orm'
import { afterAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { jobBagLink } from '../../server/services/tickets'
import { DEMO_PASSWORD, launchChromium, screenshot, signInWith, useE2E } from '../setup/e2e'
import { qrVideo } from '../setup/qr-video'

const e2e = useE2E()
let cameraBrowser: Browser | null = null
const dir = mkdtempSync(join(tmpdir(), 'mg-scan-'))
const TABLET = { width: 1280, height: 800 }

afterAll(async () => {
  await cameraBrowser?.close().catch(() => undefined)
  rmSync(dir, { recursive: true, force: true })
})

async function benchTablet(browser: Browser): Promise<Page> {
  const context = await browser.newContext({
    baseURL: e2e.url,
    viewport: TABLET,
    locale: 'en-GB',
    timezoneId: 'Europe/London',
    hasTouch: true,
    permissions: ['camera'],
  })
  const page = await context.newPage()
  await signInWith(page, 'setter@wrenfield.test', DEMO_PASSWORD)
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
  await page.goto('/bench')
  await page.locator('[data-test=scan]').waitFor()
  return page
}

/** A job bag whose next step is ready, so its page offers that step to the bench. */
async function bagWithReadyStep(offset: number) {
  // The job bag page offers its first ready step in routing order (server/services/job-bags.ts: next = first 'ready').
  const o = s.operations,
    jb = s.jobBags
  const ready = await e2e.db.db
    .select({ id: o.id, jobBagId: o.jobBagId, name: o.name, number: jb.number, outside: s.operationKinds.outside })
    .from(o)
    .innerJoin(jb, eq(jb.id, o.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, jb.orderId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, o.kindId))
    .where(and(eq(o.status, 'ready'), eq(s.orders.status, 'open'), notInArray(jb.status, ['on-hold', 'cancelled'])))
    .orderBy(asc(jb.number), asc(o.seq))
  // Each job bag's first ready step in routing order, kept when it is bench work (not outside work).
  const first = ready.filter((r, i) => i === 0 || ready[i - 1]!.number !== r.number)
  return first.filter((r) => !r.outside)[offset]!
}

describe('scanning a job ticket at the bench', () => {
  it('when the camera sees a printed ticket’s QR code, then the job bag opens with its next step, and the page raised no policy violation', async () => {
    const op = await bagWithReadyStep(0)
    expect(op, 'the seeded demo has a ready bench step').toBeTruthy()
    // The QR holds what the printed ticket holds: the job bag's link (server/services/tickets.ts jobBagLink).
    const link = jobBagLink(e2e.url, op.jobBagId)
    const video = join(dir, 'ticket.y4m')
    writeFileSync(video, qrVideo(link, { width: 640, height: 480, modulePx: 8, frames: 10 }))
    cameraBrowser = await launchChromium(['--use-fake-ui-for-media-stream', '--use-fake-device-for-media-stream', `--use-file-for-fake-video-capture=${video}`])
    const page = await benchTablet(cameraBrowser)
    const violations: string[] = []
    page.on('console', (m) => {
      if (/Content Security Policy|Refused to/i.test(m.text())) violations.push(m.text())
    })
    page.on('pageerror', (e) => violations.push(String(e)))

    await page.locator('[data-test=scan]').click()
    await page.locator('[data-test=scan-dialog] video').waitFor()
    await page
      .waitForURL((u) => u.pathname === `/job-bags/${op.jobBagId}` && u.searchParams.get('from') === 'scan', { timeout: 20_000 })
      .catch(async (err) => {
        await screenshot(page, 'bench-scan-failed', { fullPage: false })
        throw new Error(
          `${(err as Error).message}\nwhat the scan dialog said: ${await page
            .locator('[data-test=scan-dialog]')
            .textContent()
            .catch(() => '?')}\nconsole: ${violations.join(' | ')}`,
        )
      })
    await page.locator('[data-test=next-step]').waitFor()
    await expect(page.locator('[data-test=next-step]').textContent()).resolves.toContain(op.name)
    await screenshot(page, 'bench-scan-01-opened-by-camera')
    expect(violations).toEqual([])
    await page.context().close()
  })

  it('when there is no camera and the setter types the job bag number, then the same job bag opens', async () => {
    const op = await bagWithReadyStep(1)
    const page = await benchTablet(e2e.browser)
    await page.locator('[data-test=scan]').click()
    await page.locator('[data-test=bag-number]').waitFor()
    await page.locator('[data-test=bag-number]').fill(op.number)
    await screenshot(page, 'bench-scan-02-typed-number', { fullPage: false })
    await page.locator('[data-test=bag-number-go]').click()
    await page.waitForURL((u) => u.pathname === `/job-bags/${op.jobBagId}`, { timeout: 15_000 })
    await page.locator('[data-test=next-step]').waitFor()
    await expect(page.locator('[data-test=next-step]').textContent()).resolves.toContain(op.name)
    await page.context().close()
  })
})
