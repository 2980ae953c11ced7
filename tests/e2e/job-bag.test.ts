// The job bag page in Chromium: outside work sent out and booked back, a step added to the routing (manager); the ring size
// changed after ordering and a stone with its measured depth added (sales); the next step's card saying who holds it.
import { and, asc, count, eq, sql } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { DEMO_EMAIL, screenshot, signInPage, useE2E } from '../setup/e2e'
import { finishedStep, finishSteps, openOrderStep, readyBenchStep, setPieceParams, setStepStatus } from '../setup/fixtures'

const e2e = useE2E()
const step = async (id: number) =>
  (await e2e.db.db.select({ status: s.operations.status, plannedStart: s.operations.plannedStart }).from(s.operations).where(eq(s.operations.id, id)))[0]!
const stepCount = async (jobBagId: number) => (await e2e.db.db.select({ n: count() }).from(s.operations).where(eq(s.operations.jobBagId, jobBagId)))[0]!.n

describe('job bag page', () => {
  it('when the manager sends hallmarking out and books it back, then the page shows it away and then done; a new step joins the routing', async () => {
    // A job bag whose hallmarking is next: everything before it done yesterday.
    const hm = (await openOrderStep(e2e.db.db, { kind: 'hallmarking' }))!
    await finishSteps(e2e.db.db, hm.jobBagId, { before: hm.id })
    await setStepStatus(e2e.db.db, hm.id, 'ready')
    const page = await signInPage(await e2e.newContext(), 'manager')
    await page.goto(`/job-bags/${hm.jobBagId}`)
    // The next step is outside work: the page says so and offers nothing to take at a bench.
    await expect
      .poll(() => page.locator('[data-test=next-step-outside]').innerText(), { timeout: 15_000 })
      .toMatch(/is outside work .*nothing to take at a bench/s)
    await expect(page.locator('[data-test=claim]').count()).resolves.toBe(0)
    // The header names the order's customer as the office knows them, the code beside it.
    const [customer] = await e2e.db.db
      .select({ name: s.customers.name, reference: s.customers.reference })
      .from(s.jobBags)
      .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
      .where(eq(s.jobBags.id, hm.jobBagId))
    await expect(page.locator('[data-test=bag-customer]').innerText()).resolves.toBe(customer!.name)
    await expect(page.locator('.mg-page-head p').first().innerText()).resolves.toContain(`customer ${customer!.name} (${customer!.reference})`)
    await page.locator(`[data-test=send-out-${hm.id}]`).click()
    await page.locator(`[data-test=book-back-${hm.id}]`).waitFor()
    await expect.poll(() => page.locator('[data-test=next-step-outside]').innerText(), { timeout: 15_000 }).toMatch(/the bag is away/)
    // Drizzle reads a moment as ISO text (server/db/schema/common.ts instant): a planned start is set.
    expect(await step(hm.id)).toMatchObject({ status: 'running', plannedStart: expect.any(String) })
    await screenshot(page, 'job-bag-sent-out', { fullPage: false })
    await page.locator(`[data-test=book-back-${hm.id}]`).click()
    await page.locator(`[data-test=book-back-${hm.id}]`).waitFor({ state: 'detached' })
    expect((await step(hm.id)).status).toBe('done')

    // Add a step: the form refuses it without a reason, then it is saved with one.
    const before = await stepCount(hm.jobBagId)
    await page.locator('[data-test=add-step]').click()
    await page.locator('[data-test=add-kind]').click()
    await page.getByRole('option', { name: 'Inspection & packing' }).click()
    await page.locator('[data-test=add-name]').fill('Second stone check')
    await page.locator('[data-test=add-save]').click()
    await expect.poll(async () => page.locator('.el-form-item__error').count()).toBeGreaterThan(0)
    await page.locator('[data-test=add-reason]').fill('customer asked for a second check')
    await page.locator('[data-test=add-save]').click()
    await expect.poll(() => stepCount(hm.jobBagId)).toBe(before + 1)
    await page.getByText('Second stone check').first().waitFor()
    await screenshot(page, 'job-bag-step-added')
  })

  it('when sales changes the ring size to UK P and adds a stone with its depth, then the page shows the new size in every scale and the depth', async () => {
    // An open signet ring with nothing started, given UK N when it was ordered.
    const b = s.jobBags
    const [bag] = await e2e.db.db
      .select({ id: b.id, version: b.version })
      .from(b)
      .innerJoin(s.routings, eq(s.routings.id, b.routingId))
      .innerJoin(s.orders, eq(s.orders.id, b.orderId))
      .where(and(eq(s.routings.code, 'signet-ring'), eq(s.orders.status, 'open'), eq(b.status, 'waiting')))
      .orderBy(asc(b.id))
      .limit(1)
    expect(bag, 'an open signet ring').toBeTruthy()
    await setPieceParams(e2e.db.db, bag!.id, { ringSize: { scale: 'uk', value: 'N' } })
    const page = await signInPage(await e2e.newContext(), 'sales')
    await page.goto(`/job-bags/${bag!.id}`)
    const sizes = page.locator('[data-test=bag-ring-size]')
    // Pinned chart: UK N = 53.8 mm round the inside, Ø 53.8 / π = 17.1 mm, US (17.125 / 25.4 − 0.458) / 0.032 = 6.76 → 6¾.
    await expect.poll(() => sizes.innerText(), { timeout: 15_000 }).toContain('Ring size UK N · ISO 53.8 (Ø 17.1 mm) · US 6¾')
    await page.locator('[data-test=bag-ring-size-change]').click()
    const dialog = page.locator('[data-test=ring-size-dialog]')
    const value = dialog.locator('input[data-test=bag-ring-size-new-value], [data-test=bag-ring-size-new-value] input').first()
    await value.waitFor()
    await value.fill('P')
    // UK P = 56.3 mm on the pinned chart; Ø 56.3 / π = 17.92 → 17.9 mm; US (17.921 / 25.4 − 0.458) / 0.032 = 7.74 → 7¾.
    await expect.poll(() => dialog.locator('[data-test=bag-ring-size-new-others]').innerText()).toBe('UK P · ISO 56.3 (Ø 17.9 mm) · US 7¾')
    await dialog.locator('input[data-test=bag-ring-size-reason], [data-test=bag-ring-size-reason] input').first().fill('measured again at the counter')
    await screenshot(page, 'job-bag-ring-size-dialog', { fullPage: false })
    await dialog.locator('[data-test=bag-ring-size-save]').click()
    await expect.poll(() => sizes.innerText(), { timeout: 15_000 }).toContain('Ring size UK P · ISO 56.3 (Ø 17.9 mm) · US 7¾')
    const [after] = await e2e.db.db.select({ params: b.params, version: b.version }).from(b).where(eq(b.id, bag!.id))
    expect(after!.params.ringSize).toEqual({ scale: 'uk', value: 'P' })
    expect(after!.version).toBeGreaterThan(bag!.version)
    await expect
      .poll(() => page.locator('[data-test=history]').innerText(), { timeout: 15_000 })
      .toMatch(/changed the ring size UK N .* → UK P .* — measured again at the counter/)

    // A 5 mm side stone measured 3.2 mm deep: carat ≈ 5² × 3.2 × 0.0061 = 0.488 → 0.49 ct (GemGate, "Diamond Weight Estimate for Round Brilliant Cut").
    const list = page.locator('[data-test=stone-list]')
    const num = (name: string) => list.locator(`[data-test=${name}] input, input[data-test=${name}]`).first()
    await num('stone-size').fill('5')
    await num('stone-depth-input').fill('3.2')
    await num('stone-count').fill('1')
    await list.locator('[data-test=stone-add]').click()
    await expect.poll(async () => (await list.locator('[data-test=stone-depth]').first().innerText()).trim(), { timeout: 15_000 }).toBe('· 3.2 mm deep')
    await expect.poll(() => list.locator('[data-test=carat]').first().innerText()).toBe('0.49 ct')
    const [line] = await e2e.db.db
      .select({ depthMm: s.jobBagStones.depthMm, caratEach: s.jobBagStones.caratEach })
      .from(s.jobBagStones)
      .where(eq(s.jobBagStones.jobBagId, bag!.id))
    expect(line).toMatchObject({ depthMm: 3.2, caratEach: 0.49 })
    await list.scrollIntoViewIfNeeded()
    await screenshot(page, 'job-bag-ring-size-and-stone-depth')
  })
  it('when the manager opens a job bag on a tablet held upright (800 × 1280), then every column of the routing fits the table, who holds a step and its actual minutes show under its status and plan, and each step can be changed', async () => {
    // A bag whose first open step was just done in 42 minutes (a time record 102 to 60 minutes ago) and whose next step is taken.
    const done = await readyBenchStep(e2e.db.db)
    await finishedStep(e2e.db.db, done.id, {
      finishedAt: sql`now() - interval '60 minutes'`,
      records: [{ personId: done.personId, start: sql`now() - interval '102 minutes'`, end: sql`now() - interval '60 minutes'` }],
    })
    const [{ jobBagId }] = (await e2e.db.db.select({ jobBagId: s.operations.jobBagId }).from(s.operations).where(eq(s.operations.id, done.id))) as [
      { jobBagId: number },
    ]
    const [taken] = await e2e.db.db
      .select({ id: s.operations.id })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, jobBagId), eq(s.operations.status, 'pending')))
      .orderBy(asc(s.operations.seq))
      .limit(1)
    await e2e.db.db.update(s.operations).set({ status: 'claimed', claimedBy: done.personId }).where(eq(s.operations.id, taken!.id))
    const [holder] = await e2e.db.db.select({ name: s.people.name }).from(s.people).where(eq(s.people.id, done.personId))
    const page = await signInPage(await e2e.newContext({ viewport: { width: 800, height: 1280 } }), 'manager')
    await page.goto(`/job-bags/${jobBagId}`)
    const table = page.locator('[data-test=routing]')
    await table.locator(`[data-test=estimate-${taken!.id}]`).waitFor()
    await expect(table.getAttribute('data-layout')).resolves.toBe('narrow')
    // What the table shows and what the table itself can show without scrolling: its body's visible box.
    const layout = await table.evaluate((el) => {
      const seen = el.querySelector('.el-table__body-wrapper .el-scrollbar__wrap')!.getBoundingClientRect()
      const heads = [...el.querySelectorAll('.el-table__header th')].map((th) => th.getBoundingClientRect())
      return { seen: { left: seen.left, right: seen.right }, heads: heads.map((r) => ({ left: r.left, right: r.right })), viewport: innerWidth }
    })
    const last = layout.heads[layout.heads.length - 1]!
    // Every header, the last (the changes) included, lies within the table's visible part and the window: nothing to scroll to.
    for (const h of layout.heads) {
      expect(h.left).toBeGreaterThanOrEqual(layout.seen.left - 1)
      expect(h.right).toBeLessThanOrEqual(layout.seen.right + 1)
    }
    expect(last.right).toBeLessThanOrEqual(layout.viewport)
    // Each open step's "Estimate" and "Remove" are inside the visible part too, and a tap reaches them.
    const { operations, timeRecords } = (await (await page.request.get(`/api/job-bags/${jobBagId}`)).json()) as {
      operations: { id: number; status: string; claimedByName: string | null; actualMinutes: number }[]
      timeRecords: { operationId: number; startedAt: string; endedAt: string | null; minutes: number; voided: boolean }[]
    }
    // A step's actual time: its records' seconds (each to the second) added up; under ten minutes "M min S s", else whole minutes.
    const actualOf = (opId: number, actualMinutes: number) => {
      const mine = timeRecords.filter((r) => r.operationId === opId)
      const sec = mine.length
        ? mine.reduce(
            (n, r) => n + (r.voided ? 0 : r.endedAt ? Math.round((Date.parse(r.endedAt) - Date.parse(r.startedAt)) / 1000) : Math.round(r.minutes * 60)),
            0,
          )
        : Math.round(actualMinutes * 60)
      if (!sec) return '—'
      if (sec >= 600) return `${Math.round(sec / 60)} min`
      if (sec < 60) return `${sec} s`
      return sec % 60 ? `${Math.floor(sec / 60)} min ${sec % 60} s` : `${sec / 60} min`
    }
    for (const op of operations.filter((o) => o.status !== 'done' && o.status !== 'skipped')) {
      const box = (await table.locator(`[data-test=estimate-${op.id}]`).boundingBox())!
      expect(box.x).toBeGreaterThanOrEqual(layout.seen.left)
      expect(box.x + box.width).toBeLessThanOrEqual(layout.seen.right)
    }
    // Who holds a step and its actual minutes are still on the page, under its status and its planned minutes, as the server gave them.
    for (const op of operations) {
      await expect(table.locator(`[data-test=actual-${op.id}]`).innerText()).resolves.toBe(`${actualOf(op.id, op.actualMinutes)} actual`)
      if (op.claimedByName) await expect(table.locator(`[data-test=who-${op.id}]`).innerText()).resolves.toBe(op.claimedByName)
      else await expect(table.locator(`[data-test=who-${op.id}]`).count()).resolves.toBe(0)
    }
    // The two figures set up above, hand-worked: 102 − 60 = 42 min done; the next step held by the person who took it.
    await expect(table.locator(`[data-test=actual-${done.id}]`).innerText()).resolves.toBe('42 min actual')
    await expect(table.locator(`[data-test=who-${taken!.id}]`).innerText()).resolves.toBe(holder!.name)
    await table.scrollIntoViewIfNeeded()
    await screenshot(page, 'job-bag-routing-upright')
    await table.locator(`[data-test=estimate-${taken!.id}]`).click()
    await page
      .locator('.el-dialog')
      .filter({ hasText: /estimate/i })
      .first()
      .waitFor()
    await screenshot(page, 'job-bag-routing-upright-estimate', { fullPage: false })
  })

  it('when the bench account’s person holds the next step, then the manager’s card names that person and theirs says it is taken by them', async () => {
    // The demo bench account's own person.
    const [holder] = await e2e.db.db
      .select({ id: s.people.id, name: s.people.name })
      .from(s.people)
      .innerJoin(s.users, eq(s.users.id, s.people.userId))
      .where(eq(s.users.email, DEMO_EMAIL.bench))
    expect(holder, 'the bench account has a person').toBeTruthy()
    // A ready bench step taken by them; any other ready step of its bag waits, so the taken one is the bag's next step.
    const op = await readyBenchStep(e2e.db.db)
    const [{ jobBagId }] = (await e2e.db.db.select({ jobBagId: s.operations.jobBagId }).from(s.operations).where(eq(s.operations.id, op.id))) as [
      { jobBagId: number },
    ]
    await e2e.db.db
      .update(s.operations)
      .set({ status: 'pending' })
      .where(and(eq(s.operations.jobBagId, jobBagId), eq(s.operations.status, 'ready')))
    await e2e.db.db.update(s.operations).set({ status: 'claimed', claimedBy: holder!.id }).where(eq(s.operations.id, op.id))

    const statusOf = async (role: 'manager' | 'bench') => {
      const page = await signInPage(await e2e.newContext(), role)
      await page.goto(`/job-bags/${jobBagId}`)
      const card = page.locator(`[data-test=next-step] [data-op="${op.id}"]`)
      await card.waitFor({ timeout: 15_000 })
      return { page, status: card.locator('[data-test=op-status]') }
    }
    // The label is shown in capitals by its style: the words themselves are read from textContent.
    const manager = await statusOf('manager')
    await expect.poll(() => manager.status.textContent(), { timeout: 15_000 }).toBe(`Taken by ${holder!.name}`)
    await expect(manager.page.locator('[data-test=next-step]').innerText()).resolves.not.toMatch(/taken by you/i)
    await screenshot(manager.page, 'job-bag-next-step-held-by-other', { fullPage: false })
    const bench = await statusOf('bench')
    await expect.poll(() => bench.status.textContent(), { timeout: 15_000 }).toBe('Taken by you')
    await screenshot(bench.page, 'job-bag-next-step-held-by-me', { fullPage: false })
  })
})
