// Our own Content-Security-Policy must not break our own screens: every page each role can reach loads without a policy violation.
import { describe, expect, it } from 'vitest'
import { ROLES } from '../../shared/domain/roles'
import { navTargets, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()

describe('content security policy in the browser', () => {
  it.each(ROLES)('when the %s opens every page of their navigation, then Chromium reports no Content-Security-Policy violation', async (role) => {
    const context = await e2e.newContext()
    const page = await signInPage(context, role)
    const violations: string[] = []
    page.on('console', (m) => {
      if (/Content Security Policy|Refused to (load|execute|create|connect|apply|frame)/i.test(m.text())) violations.push(`${page.url()}: ${m.text()}`)
    })
    // securitypolicyviolation events catch what the console may word differently.
    await context.addInitScript(() =>
      document.addEventListener('securitypolicyviolation', (e) =>
        console.error(`Content Security Policy violation: ${e.violatedDirective} ${e.blockedURI} at ${e.sourceFile}:${e.lineNumber}:${e.columnNumber}`),
      ),
    )
    const targets = await navTargets(page)
    expect(targets.length).toBeGreaterThan(0)
    for (const to of targets) {
      await page.goto(to)
      await page.waitForLoadState('networkidle').catch(() => undefined)
    }
    expect(violations).toEqual([])
    await context.close()
  })
})
