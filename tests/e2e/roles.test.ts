// Each role signs in in Chromium and sees its own navigation; screens not for a role say so, and the API agrees.
import { describe, expect, it } from 'vitest'
import type { Role } from '../../shared/domain/roles'
import { DEMO_EMAIL, navTargets, screenshot, signInPage, signInWith, useE2E } from '../setup/e2e'

const e2e = useE2E()

// The navigation each role is meant to have (product decision in the team brief).
const EXPECTED: Record<Role, { home: string; nav: string[] }> = {
  owner: {
    home: '/orders',
    nav: [
      '/plan',
      '/bench',
      '/orders',
      '/promise',
      '/customers',
      '/quotes',
      '/outbox',
      '/benches',
      '/people',
      '/calendar',
      '/metal',
      '/routings',
      '/insights',
      '/money',
      '/team',
      '/settings',
    ],
  },
  manager: {
    home: '/plan',
    nav: ['/plan', '/orders', '/promise', '/customers', '/quotes', '/outbox', '/benches', '/people', '/calendar', '/metal', '/routings'],
  },
  bench: { home: '/bench', nav: ['/bench'] },
  sales: { home: '/orders', nav: ['/plan', '/orders', '/promise', '/customers', '/quotes', '/outbox'] },
}

describe('roles in the browser', () => {
  for (const role of Object.keys(EXPECTED) as Role[]) {
    it(`when a ${role} signs in, then they land on their start page and see only their navigation`, async () => {
      const context = await e2e.newContext()
      try {
        const page = await signInPage(context, role)
        await page.waitForURL((u) => u.pathname === EXPECTED[role].home)
        expect(await navTargets(page)).toEqual(EXPECTED[role].nav)
        await expect(page.locator('[data-test=user-role]').textContent()).resolves.toMatch(new RegExp(role, 'i'))
        await expect(page.locator('[data-test=workshop-name]').textContent()).resolves.toBe('Wrenfield Street Workshop')
        await screenshot(page, `home-${role}`)
      } finally {
        await context.close()
      }
    })
  }

  it('when a bench user signs in on a tablet, then the navigation folds into a rail of icons that still leads to their queue', async () => {
    const context = await e2e.newContext({ viewport: { width: 820, height: 1180 } })
    try {
      const page = await signInPage(context, 'bench')
      await page.waitForURL((u) => u.pathname === '/bench')
      const side = await page.locator('aside').boundingBox()
      expect(side?.width).toBeLessThan(100)
      expect(await navTargets(page)).toEqual(['/bench'])
      expect(await page.locator('[data-nav="/bench"]').getAttribute('title')).toBe('My bench queue')
      await screenshot(page, 'home-bench-tablet')
    } finally {
      await context.close()
    }
  })

  it('when a bench user opens /settings, then the page says it is not for their role and the API refuses the change', async () => {
    const context = await e2e.newContext()
    try {
      const page = await signInPage(context, 'bench')
      await page.goto('/settings')
      const notice = page.locator('[data-test=not-allowed]')
      await notice.waitFor()
      expect(await notice.textContent()).toMatch(/not for the bench role/i)
      await screenshot(page, 'not-allowed-bench')
      const status = await page.evaluate(async () => {
        const s = await (await fetch('/api/session')).json()
        const r = await fetch('/api/workshop', {
          method: 'PUT',
          headers: { 'content-type': 'application/json', 'x-csrf-token': s.csrfToken },
          body: JSON.stringify({
            name: 'Taken over',
            timeZone: 'Europe/London',
            weekPattern: [{ weekday: 1, start: '08:00', end: '12:00' }],
            planningLoad: 0.8,
            version: 0,
          }),
        })
        return r.status
      })
      expect(status).toBe(403)
    } finally {
      await context.close()
    }
  })

  it('when the password is wrong, then the sign-in form says so clearly and stays on the sign-in page', async () => {
    const context = await e2e.newContext()
    try {
      const page = await context.newPage()
      await signInWith(page, DEMO_EMAIL.manager, 'not-the-password')
      const alert = page.locator('[data-test=sign-in-error]')
      await alert.waitFor()
      expect(await alert.textContent()).toMatch(/e-mail or password is not right/i)
      expect(new URL(page.url()).pathname).toBe('/sign-in')
      await screenshot(page, 'sign-in-wrong-password')
    } finally {
      await context.close()
    }
  })
})
