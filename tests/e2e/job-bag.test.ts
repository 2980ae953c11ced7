// The job bag page for the manager in Chromium: outside work sent out and booked back, a step added to the routing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshot, signInPage, startE2E, type E2E } from '../setup/e2e'

let e2e: E2E
beforeAll(async () => { e2e = await startE2E() })
afterAll(async () => { await e2e?.close() })
const q = async (sql: string, args: unknown[] = []) => (await e2e.db.pool.query(sql, args)).rows

describe('job bag page', () => {
  it('when the manager sends hallmarking out and books it back, then the page shows it away and then done; a new step joins the routing', async () => {
    // A job bag whose hallmarking is next: everything before it done yesterday.
    const [hm] = await q(`select o.id, o.job_bag_id, o.after from operations o join operation_kinds k on k.id = o.kind_id join job_bags b on b.id = o.job_bag_id join orders r on r.id = b.order_id
      where k.code = 'hallmarking' and r.status = 'open' order by r.due_date limit 1`)
    await q(`update operations set status = 'done', finished_at = now() - interval '1 day' where job_bag_id = $1 and seq < (select seq from operations where id = $2)`, [hm.job_bag_id, hm.id])
    await q(`update operations set status = 'ready' where id = $1`, [hm.id])
    const page = await signInPage(await e2e.newContext(), 'manager')
    await page.goto(`/job-bags/${hm.job_bag_id}`)
    await page.locator(`[data-test=send-out-${hm.id}]`).click()
    await page.locator(`[data-test=book-back-${hm.id}]`).waitFor()
    expect((await q('select status, planned_start from operations where id = $1', [hm.id]))[0]).toMatchObject({ status: 'running', planned_start: expect.any(Date) })
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
})
