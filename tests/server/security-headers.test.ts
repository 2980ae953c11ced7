// The Content-Security-Policy the app sends: tight by default, with exactly the worker source the ticket scanner needs.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Agent, createTestApp, type TestApp } from '../setup/app'

let t: TestApp
beforeAll(async () => {
  t = await createTestApp()
})
afterAll(async () => {
  await t?.close()
})

/** "a x y; b z" → { a: ['x', 'y'], b: ['z'] } */
function directives(header: string): Record<string, string[]> {
  return Object.fromEntries(
    header
      .split(';')
      .map((d) => d.trim())
      .filter(Boolean)
      .map((d) => {
        const [name, ...values] = d.split(/\s+/)
        return [name!, values]
      }),
  )
}

describe('content security policy', () => {
  it('when any page is served, then workers may come only from the app itself and blob: URLs (qr-scanner builds its decoder worker from a blob)', async () => {
    const r = await new Agent(t.app).get('/api/health')
    const csp = directives(r.headers['content-security-policy'] as string)
    // qr-scanner 1.4 (node_modules/qr-scanner/qr-scanner-worker.min.js) calls new Worker(URL.createObjectURL(new Blob([...]))).
    expect(csp['worker-src']).toEqual(["'self'", 'blob:'])
  })

  it('when the worker source is allowed, then scripts stay self-only: no blob:, inline or eval scripts in the page', async () => {
    const r = await new Agent(t.app).get('/api/health')
    const csp = directives(r.headers['content-security-policy'] as string)
    expect(csp['default-src']).toEqual(["'self'"])
    expect(csp['script-src']).toEqual(["'self'"])
    expect(csp['child-src']).toBeUndefined()
    expect(csp['frame-src']).toBeUndefined()
  })
})
