// The job bag page in Chromium: outside work sent out and booked back, a step added to the routing (manager); the ring size
// changed after ordering and a stone with its measured depth added (sales).
import { describe, expect, it } from 'vitest'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()
const q = async (sql: string, args: unknown[] = []) => (await e2e.db.pool.query(sql, args)).rows

describe('job bag page', () => {
  it('when the manager sends hallmarking out and books it back, then the page shows it away and then done; a new step joins the routing', async () => {
    // A job bag whose hallmarking is next: everything before it done yesterday.
    const [hm] =
      await q(`select o.id, o.job_bag_id, o.after from operations o join operation_kinds k on k.id = o.kind_id join job_bags b on b.id = o.job_bag_id join orders r on r.id = b.order_id
      where k.code = 'hallmarking' and r.status = 'open' order by r.due_date limit 1`)
    await q(
      `update operations set status = 'done', finished_at = now() - interval '1 day' where job_bag_id = $1 and seq < (select seq from operations where id = $2)`,
      [hm.job_bag_id, hm.id],
    )
    await q(`update operations set status = 'ready' where id = $1`, [hm.id])
    const page = await signInPage(await e2e.newContext(), 'manager')
    await page.goto(`/job-bags/${hm.job_bag_id}`)
    await page.locator(`[data-test=send-out-${hm.id}]`).click()
    await page.locator(`[data-test=book-back-${hm.id}]`).waitFor()
    expect((await q('select status, planned_start from operations where id = $1', [hm.id]))[0]).toMatchObject({
      status: 'running',
      planned_start: expect.any(Date),
    })
    await screenshot(page, 'job-bag-sent-out', { fullPage: false })
    await page.locator(`[data-test=book-back-${hm.id}]`).click()
    await page.locator(`[data-test=book-back-${hm.id}]`).waitFor({ state: 'detached' })
    expect((await q('select status from operations where id = $1', [hm.id]))[0].status).toBe('done')

    // Add a step: the form refuses it without a reason, then it is saved with one.
    const before = (await q('select count(*)::int n from operations where job_bag_id = $1', [hm.job_bag_id]))[0].n
    await page.locator('[data-test=add-step]').click()
    await page.locator('[data-test=add-kind]').click()
    await page.getByRole('option', { name: 'Inspection & packing' }).click()
    await page.locator('[data-test=add-name]').fill('Second stone check')
    await page.locator('[data-test=add-save]').click()
    await expect.poll(async () => page.locator('.el-form-item__error').count()).toBeGreaterThan(0)
    await page.locator('[data-test=add-reason]').fill('customer asked for a second check')
    await page.locator('[data-test=add-save]').click()
    await expect.poll(async () => (await q('select count(*)::int n from operations where job_bag_id = $1', [hm.job_bag_id]))[0].n).toBe(before + 1)
    await page.getByText('Second stone check').first().waitFor()
    await screenshot(page, 'job-bag-step-added')
  })

  it('when sales changes the ring size to UK P and adds a stone with its depth, then the page shows the new size in every scale and the depth', async () => {
    // An open signet ring with nothing started, given UK N when it was ordered.
    const [bag] = await q(`select b.id, b.version from job_bags b join routings t on t.id = b.routing_id join orders o on o.id = b.order_id
      where t.code = 'signet-ring' and o.status = 'open' and b.status = 'waiting' order by b.id limit 1`)
    expect(bag, 'an open signet ring').toBeTruthy()
    await q(`update job_bags set params = params || '{"ringSize": {"scale": "uk", "value": "N"}}'::jsonb where id = $1`, [bag.id])
    const page = await signInPage(await e2e.newContext(), 'sales')
    await page.goto(`/job-bags/${bag.id}`)
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
    const [after] = await q('select params, version from job_bags where id = $1', [bag.id])
    expect(after.params.ringSize).toEqual({ scale: 'uk', value: 'P' })
    expect(after.version).toBeGreaterThan(bag.version)
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
    const [line] = await q('select depth_mm, carat_each from job_bag_stones where job_bag_id = $1', [bag.id])
    expect(line).toMatchObject({ depth_mm: 3.2, carat_each: 0.49 })
    await list.scrollIntoViewIfNeeded()
    await screenshot(page, 'job-bag-ring-size-and-stone-depth')
  })
})
