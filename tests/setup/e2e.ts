// Browser tests: the real server on a private database serving the built client, and Debian's Chromium via playwright-core.
import { mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { afterAll, beforeAll, expect } from 'vitest'
import type { Role } from '../../shared/domain/roles'
import { loadConfig } from '../../server/config'
import { startServer } from '../../server/index'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { DEMO_EMAIL } from './app'
import { createTestDb, type TestDb } from './db'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { finishPredecessors } from './fixtures'

export { DEMO_EMAIL, DEMO_PASSWORD }

const ROOT = join(import.meta.dirname, '..', '..')
export const SCREENSHOT_DIR = join(ROOT, 'test-results')

export interface E2E {
  /** Base URL of the running server, e.g. http://127.0.0.1:39211 */
  url: string
  browser: Browser
  db: TestDb
  /** A fresh browser context (own cookies) pointed at the server; desktop size unless a viewport is given. */
  newContext(o?: { viewport?: { width: number; height: number } }): Promise<BrowserContext>
  close(): Promise<void>
}

/** Debian's Chromium, headless; `extraArgs` add flags (e.g. a fake camera fed from a file). */
export function launchChromium(extraArgs: string[] = []): Promise<Browser> {
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      ...extraArgs,
    ],
  })
}

/** Starts the server (port 0) on a copy of the seeded database, with the built client from dist/, and Chromium; `env` adds settings (e.g. PAY_FAKE_URL). */
export async function startE2E(o: { env?: Record<string, string> } = {}): Promise<E2E> {
  const db = await createTestDb()
  const server = await startServer(
    loadConfig({
      DATABASE_URL: db.url,
      PORT: '0',
      SESSION_SECRET: 'e2e-secret-e2e-secret-e2e',
      // E2E_CLIENT_DIR lets one engineer test a private build while others rebuild dist/ on the same machine.
      CLIENT_DIR: process.env.E2E_CLIENT_DIR ?? join(ROOT, 'dist'),
      NODE_ENV: 'test',
      LOGIN_ATTEMPTS_PER_15_MIN: '1000',
      ...o.env,
    }),
  )
  const browser = await launchChromium()
  return {
    url: server.url,
    browser,
    db,
    newContext: (o = {}) =>
      browser.newContext({ baseURL: server.url, viewport: o.viewport ?? { width: 1440, height: 900 }, locale: 'en-GB', timezoneId: 'Europe/London' }),
    async close() {
      await browser.close().catch(() => undefined)
      await server.close().catch(() => undefined)
      await db.drop().catch(() => undefined)
    },
  }
}

/**
 * The server and Chromium for every test of one file: started before the first test, closed after the last. The handle
 * can be taken at the top of the file and used inside tests and hooks. `env` may be a function, read when the server
 * starts (e.g. the address of a fake mail or payment server started in an earlier beforeAll).
 */
export function useE2E(o: { env?: Record<string, string> | (() => Record<string, string>) } = {}): E2E {
  let started: E2E | undefined
  beforeAll(async () => {
    started = await startE2E({ env: typeof o.env === 'function' ? o.env() : o.env })
  })
  const stop = async () => {
    const s = started
    started = undefined
    await s?.close()
  }
  afterAll(stop)
  const need = (): E2E => {
    if (!started) throw new Error('The browser test server is not running: use it inside tests and hooks, after useE2E()')
    return started
  }
  return {
    get url() {
      return need().url
    },
    get browser() {
      return need().browser
    },
    get db() {
      return need().db
    },
    newContext: (c) => need().newContext(c),
    close: stop,
  }
}

/** Makes a step ready straight in the test database: every step it follows (and theirs) is marked done yesterday. */
export async function makeStepReady(e2e: E2E, operationId: number) {
  await finishPredecessors(e2e.db.db, operationId)
  await e2e.db.db.update(s.operations).set({ status: 'ready' }).where(eq(s.operations.id, operationId))
}

/** Where a bar of the plan board is drawn, or null when it is not wholly inside the visible part of the timeline. */
export async function barBox(page: Page, id: number) {
  const el = page.locator(`.vis-item.board-bar[data-id="${id}"]`)
  if (!(await el.count())) return null
  const [box, panel] = await Promise.all([el.boundingBox(), page.locator('.vis-panel.vis-center').boundingBox()])
  if (!box || !panel || box.x < panel.x || box.x + box.width > panel.x + panel.width || box.y < panel.y || box.y + box.height > panel.y + panel.height)
    return null
  return box
}

/** The plan board once its data is in and drawn: no "Updating…" and no request in flight. */
export async function boardSettled(page: Page) {
  await page.locator('[data-test=board-timeline] .vis-panel.vis-center').waitFor()
  await page.waitForLoadState('networkidle').catch(() => undefined)
  await page.getByText('Updating…').waitFor({ state: 'hidden', timeout: 20_000 })
}

export interface BoardHeading {
  day: string
  x: number
  width: number
  /** A closed day, kept as a narrow marked column. */
  closed: boolean
  ticks: string[]
}
/** The plan board's day headings on screen, left to right, with their hour ticks. */
export async function boardHeadings(page: Page): Promise<BoardHeading[]> {
  return page.evaluate(() => {
    const ticks = [...document.querySelectorAll<HTMLElement>('[data-test=board-tick]')]
    return [...document.querySelectorAll<HTMLElement>('[data-test=board-day]')].map((el) => {
      const r = el.getBoundingClientRect()
      return {
        day: el.dataset.day!,
        x: r.x,
        width: r.width,
        closed: !!el.querySelector('[data-test=board-day-closed]') || el.classList.contains('board-axis__day--closed'),
        ticks: ticks.filter((t) => t.dataset.day === el.dataset.day).map((t) => t.textContent!.trim()),
      }
    })
  })
}

/** Fills the sign-in form and waits until the app has left the sign-in page. */
export async function signInWith(page: Page, email: string, password: string) {
  await page.goto('/sign-in')
  await page.locator('input[name=email]').fill(email)
  await page.locator('input[name=password]').fill(password)
  await page.locator('[data-test=sign-in-submit]').click()
}

/** A new page in `context`, signed in as the demo user of `role`, on that role's start page. */
export async function signInPage(context: BrowserContext, role: Role): Promise<Page> {
  const page = await context.newPage()
  await signInWith(page, DEMO_EMAIL[role], DEMO_PASSWORD)
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 15_000 })
  await page.locator('[data-test=user-name]').waitFor({ state: 'attached' })
  return page
}

/** A signed-in page for a demo account in its own context, as a tablet or desktop browser of the given size would open it. */
export async function signedInTablet(e2e: E2E, email: string, viewport = { width: 1280, height: 800 }): Promise<Page> {
  const context = await e2e.browser.newContext({ baseURL: e2e.url, viewport, locale: 'en-GB', timezoneId: 'Europe/London', hasTouch: true })
  const p = await context.newPage()
  await signInWith(p, email, DEMO_PASSWORD)
  await p.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
  return p
}

/**
 * Saves a screenshot as test-results/<name>.png (the whole page unless `fullPage: false`, e.g. for dialogs) and returns its path.
 * Capturing beyond the viewport once stalled in a full run (90 s, with a dialog open over the board, not reproducible alone): a
 * whole-page capture that times out is retried as the viewport only, with a warning; a page that cannot be captured at all
 * still fails the test.
 */
export async function screenshot(page: Page, name: string, o: { fullPage?: boolean } = {}): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true })
  const path = join(SCREENSHOT_DIR, `${name}.png`)
  await page.waitForLoadState('networkidle').catch(() => undefined)
  const fullPage = o.fullPage ?? true
  try {
    await page.screenshot({ path, fullPage, animations: 'disabled', timeout: fullPage ? 45_000 : 90_000 })
  } catch (err) {
    if (!fullPage || !(err instanceof Error) || err.name !== 'TimeoutError') throw err
    console.warn(`screenshot ${name}: the whole-page capture timed out; taking the viewport only`)
    await page.screenshot({ path, fullPage: false, animations: 'disabled', timeout: 45_000 })
  }
  return path
}

/** The hrefs of the navigation links the page shows. */
export async function navTargets(page: Page): Promise<string[]> {
  return page.locator('nav[aria-label=Main] [data-nav]').evaluateAll((els) => els.map((e) => e.getAttribute('data-nav') ?? ''))
}

/** A call through the page's own session (CSRF token from GET /api/session on writes). */
export async function call(page: Page, method: string, path: string, body?: unknown): Promise<{ status: number; body: any }> {
  return page.evaluate(
    async ({ method, path, body }) => {
      const headers: Record<string, string> = { 'content-type': 'application/json' }
      if (method !== 'GET') headers['x-csrf-token'] = (await (await fetch('/api/session', { credentials: 'same-origin' })).json()).csrfToken
      const r = await fetch(path, { method, credentials: 'same-origin', headers, body: body === undefined ? undefined : JSON.stringify(body) })
      return { status: r.status, body: await r.json().catch(() => null) }
    },
    { method, path, body },
  )
}

/** Runs the planner for 2 s and publishes its draft, through the API in the page's session. */
export async function publishPlan(page: Page) {
  const run = await call(page, 'POST', '/api/plans/runs', { timeLimitSeconds: 2 })
  expect(run.status, JSON.stringify(run.body)).toBe(202)
  await expect.poll(async () => (await call(page, 'GET', `/api/plans/runs/${run.body.id}`)).body.status, { timeout: 30_000, interval: 300 }).toBe('done')
  const planId = (await call(page, 'GET', `/api/plans/runs/${run.body.id}`)).body.planId
  expect((await call(page, 'POST', `/api/plans/${planId}/publish`)).status).toBe(200)
}
