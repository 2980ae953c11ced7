// Accounts in Chromium: the owner invites someone by e-mail, the link from the local test mailbox opens the page where
// they choose their password, and they land signed in; a manager makes a tablet a bench station where a setter acts with her PIN.
import { and, desc, eq } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { DEMO_PASSWORD, screenshot, signInPage, signInWith, useE2E } from '../setup/e2e'
import { benchIdByName, finishSteps, openOrderStep, personIdByEmail, setStepStatus } from '../setup/fixtures'

let fake: FakeSmtp
let owner: Page
beforeAll(async () => {
  fake = await startFakeSmtp()
})
afterAll(async () => {
  await fake?.close()
})
const e2e = useE2E({ env: () => ({ SMTP_URL: fake.url }) })
beforeAll(async () => {
  fake.useDb(e2e.db.db)
  owner = await signInPage(await e2e.newContext(), 'owner')
})

describe('invitation by e-mail', () => {
  it('when the owner invites someone and they open the link from their mail, then they choose a password and land signed in', async () => {
    await owner.goto('/team')
    await owner.locator('[data-test=invite-open]').click()
    const dialog = owner.locator('.el-dialog', { hasText: 'Invite by e-mail' })
    await dialog.locator('input[name=invite-name]').fill('Rosa Fenwick')
    await dialog.locator('input[name=invite-email]').fill('rosa@fenwick.test')
    await dialog.getByText('Sales', { exact: true }).click()
    await dialog.locator('[data-test=invite-send]').click()
    const waiting = owner.locator('[data-test=invitations]')
    await waiting.getByText('rosa@fenwick.test').waitFor()
    const row = waiting.locator('.el-table__row', { hasText: 'rosa@fenwick.test' })
    expect(await row.textContent()).toContain('Rosa Fenwick')
    expect(await row.textContent()).toContain('Sales')
    await screenshot(owner, 'accounts-invitation-waiting')

    // The link as Rosa receives it, from the local test mailbox.
    const mail = await fake.waitFor((m) => m.to.includes('rosa@fenwick.test'), 30_000)
    const link = mail.text.match(/https?:\/\/\S+\/welcome\/[A-Za-z0-9_-]+/)?.[0]
    expect(link, mail.text).toBeTruthy()
    expect(new URL(link!).origin).toBe(new URL(e2e.url).origin)

    const rosaContext = await e2e.newContext()
    try {
      const rosa = await rosaContext.newPage()
      await rosa.goto(link!)
      await rosa.locator('[data-test=link-title]').getByText('Welcome, Rosa Fenwick').waitFor()
      expect(await rosa.locator('[data-test=link-email]').textContent()).toBe('rosa@fenwick.test')
      await rosa.locator('input[name=new-password]').fill('rosa chooses this one')
      await rosa.locator('input[name=new-password-again]').fill('rosa chooses this')
      await rosa.locator('[data-test=link-submit]').click()
      await rosa.getByText('Is not the same as the password').waitFor()
      await screenshot(rosa, 'accounts-welcome-mismatch')
      await rosa.locator('input[name=new-password-again]').fill('rosa chooses this one')
      await rosa.locator('[data-test=link-submit]').click()
      // Sales start on the orders page, signed in under their own name.
      await rosa.waitForURL((u) => u.pathname === '/orders', { timeout: 30_000 })
      await rosa.locator('[data-test=user-name]').getByText('Rosa Fenwick').waitFor()
      expect(await rosa.locator('[data-test=user-role]').textContent()).toBe('Sales')
      await screenshot(rosa, 'accounts-welcome-signed-in')

      // The same link a second time: refused, with the reason.
      const again = await rosaContext.newPage()
      await again.goto(link!)
      await again.locator('[data-test=link-error]').waitFor()
      expect(await again.locator('[data-test=link-error]').textContent()).toMatch(/used already/)
      await screenshot(again, 'accounts-welcome-used')
    } finally {
      await rosaContext.close()
    }

    await owner.reload()
    await owner.locator('.el-table__row', { hasText: 'rosa@fenwick.test' }).first().waitFor()
    expect(await owner.locator('[data-test=invitations]').count()).toBe(0)
    await screenshot(owner, 'accounts-team-after')
  })
})

describe('bench station', () => {
  it('when a manager makes a tablet the setting bench station, then the setter taps her name, enters her PIN, takes a job as herself, and the tablet asks the next person', async () => {
    const db = e2e.db.db
    const inesId = await personIdByEmail(db, 'setter@wrenfield.test')
    const benchId = await benchIdByName(db, 'Setting bench A')
    // A setting step made ready straight in the database (the steps before it marked done yesterday).
    const op = (await openOrderStep(db, { kind: 'setting', key: 'set', status: 'pending' }))!
    await finishSteps(db, op.jobBagId, { before: op.id })
    await setStepStatus(db, op.id, 'ready')

    // The owner sets Ines's PIN on People & skills.
    await owner.goto('/people')
    await owner.locator(`[data-test=set-pin-${inesId}]`).click()
    const box = owner.locator('.el-message-box', { hasText: 'Set bench PIN' })
    await box.locator('input').fill('4821')
    await box.getByRole('button', { name: 'Set PIN' }).click()
    await owner.getByText("Ines Harrowby's PIN is set").waitFor()

    const context = await e2e.browser.newContext({
      baseURL: e2e.url,
      viewport: { width: 1280, height: 800 },
      locale: 'en-GB',
      timezoneId: 'Europe/London',
      hasTouch: true,
    })
    try {
      const tablet = await context.newPage()
      await signInWith(tablet, 'manager@wrenfield.test', DEMO_PASSWORD)
      await tablet.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
      await tablet.goto('/bench')
      await tablet.locator(`[data-test="pick-bench-${benchId}"]`).click()
      await tablet.locator('[data-test=make-station]').click()
      await tablet.locator('.el-message-box').getByRole('button', { name: 'Make it the station' }).click()
      await tablet.locator('[data-test=station-people]').waitFor()
      expect(await tablet.locator('[data-test=user-name]').textContent()).toBe('Setting bench A station')
      expect(await tablet.locator('[data-test=bench-name]').textContent()).toBe('Setting bench A')
      await screenshot(tablet, 'accounts-station-names')

      // A wrong PIN first: refused with the tries left (5 in a row lock it; common practice, no source).
      await tablet.locator(`[data-test=station-person-${inesId}]`).click()
      for (const d of '1111') await tablet.locator(`[data-test=pin-key-${d}]`).click()
      await tablet.locator('[data-test=pin-ok]').click()
      await tablet.locator('[data-test=pin-error]').getByText('That PIN is not right; 4 tries left').waitFor()
      await screenshot(tablet, 'accounts-station-wrong-pin', { fullPage: false })
      for (const d of '4821') await tablet.locator(`[data-test=pin-key-${d}]`).click()
      await tablet.locator('[data-test=pin-ok]').click()
      await tablet.locator('[data-test=bench-person]').getByText('Ines Harrowby').waitFor()
      const next = tablet.locator(`[data-test=next-for-me] [data-op="${op.id}"]`)
      await next.waitFor()
      await screenshot(tablet, 'accounts-station-ines')
      await next.locator('[data-test=claim]').click()
      // After her action the tablet asks for the next person's name again.
      await tablet.locator('[data-test=station-people]').waitFor()
      await screenshot(tablet, 'accounts-station-after-claim')
      const [after] = await db.select({ claimedBy: s.operations.claimedBy, status: s.operations.status }).from(s.operations).where(eq(s.operations.id, op.id))
      expect(after).toEqual({ claimedBy: inesId, status: 'claimed' })
      const l = s.auditLog
      const [a] = await db
        .select({ details: l.details })
        .from(l)
        .where(and(eq(l.entity, 'operation'), eq(l.entityId, op.id), eq(l.action, 'claim')))
        .orderBy(desc(l.id))
        .limit(1)
      expect(a!.details).toMatchObject({ actingPersonName: 'Ines Harrowby', station: 'Setting bench A' })
    } finally {
      await context.close()
    }
  })
})

describe('forgotten password', () => {
  it('when someone asks for a new-password link on the sign-in page, then the page says a link is on its way without saying whether the address has an account', async () => {
    const context = await e2e.newContext()
    try {
      const page = await context.newPage()
      await page.goto('/sign-in')
      await page.locator('[data-test=forgot-password]').click()
      await page.locator('input[name=reset-email]').fill('nobody@nowhere.test')
      await page.locator('[data-test=reset-submit]').click()
      const sent = page.locator('[data-test=reset-sent]')
      await sent.waitFor()
      expect(await sent.textContent()).toMatch(
        /If nobody@nowhere\.test belongs to an account here, a link to choose a new password is on its way\. It works once, for 60 minutes\./,
      )
      await screenshot(page, 'accounts-forgot-password')
    } finally {
      await context.close()
    }
  })
})
