// Invitations in Chromium: the owner invites someone by e-mail, the link from the local test mailbox opens the page where
// they choose their password, and they land signed in; the invitation no longer waits on the team page.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { screenshot, signInPage, startE2E, type E2E } from '../setup/e2e'

let e2e: E2E
let fake: FakeSmtp
let ownerContext: BrowserContext
let owner: Page

beforeAll(async () => {
  fake = await startFakeSmtp()
  e2e = await startE2E({ env: { SMTP_URL: fake.url } })
  fake.useDb(e2e.db.db)
  ownerContext = await e2e.newContext()
  owner = await signInPage(ownerContext, 'owner')
})
afterAll(async () => {
  await ownerContext?.close()
  await e2e?.close()
  await fake?.close()
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
