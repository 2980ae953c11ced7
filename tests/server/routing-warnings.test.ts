// Routing warnings in the API: every seeded routing passes its own check, and a routing that lets work start while a casting is away comes back with warnings.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { routingWarnings } from '../../shared/domain/routing-warnings'
import type { Routing } from '../../shared/schemas/routing'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

let t: TestApp
let manager: Agent
let kinds: Record<string, { id: number; outside: boolean }>
beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  kinds = Object.fromEntries(((await manager.get('/api/operation-kinds')).body as { code: string; id: number; outside: boolean }[]).map((k) => [k.code, k]))
})
afterAll(async () => {
  await t?.close()
})

describe('routing warnings', () => {
  it('when the demo routings are read, then none has a warning and in each every step is linked to the others', async () => {
    const all = (await manager.get('/api/routings')).body as Routing[]
    expect(all.length).toBeGreaterThanOrEqual(10)
    const outside = new Set(
      Object.values(kinds)
        .filter((k) => k.outside)
        .map((k) => k.id),
    )
    expect(all.filter((r) => r.steps.length > 1).length, 'demo routings of several steps').toBeGreaterThanOrEqual(5)
    for (const r of all) {
      expect(r.warnings, r.code).toEqual([])
      expect(
        routingWarnings(r.steps, (k) => outside.has(k)),
        r.code,
      ).toEqual([])
      // Said plainly: in a routing of several steps, each step comes after another or has one coming after it.
      if (r.steps.length > 1)
        for (const s of r.steps) expect(s.after.length > 0 || r.steps.some((o) => o.after.includes(s.key)), `${r.code}: ${s.key}`).toBe(true)
    }
  })

  it('when the stud production run is read, then cleaning comes after the casting', async () => {
    const studs = ((await manager.get('/api/routings')).body as Routing[]).find((r) => r.code === 'stud-run')!
    expect(studs.steps.find((s) => s.key === 'clean')!.after).toEqual(['cast'])
  })

  it('when a routing lets the clean-up start while the casting is away, then it is saved and answered with both warnings, and reads give them too', async () => {
    const steps = [
      { key: 'cast', kindId: kinds.casting!.id, name: 'Cast tree', baseMinutes: 0, leadDays: 5 },
      { key: 'clean', kindId: kinds.filing!.id, name: 'Cut off and clean', baseMinutes: 5 },
      { key: 'polish', kindId: kinds.polishing!.id, name: 'Polish', baseMinutes: 4, after: ['clean'] },
    ]
    const c = await manager.post('/api/routings', { code: 'loose-studs', name: 'Loose studs', steps })
    expect(c.status).toBe(201)
    expect(c.body.warnings.map((w: { code: string }) => w.code)).toEqual(['starts-while-away', 'not-connected'])
    expect(c.body.warnings[0]).toMatchObject({ step: 'clean', outside: ['cast'] })
    expect(c.body.warnings[1]).toMatchObject({ steps: ['cast'] })
    expect((await manager.get(`/api/routings/${c.body.id}`)).body.warnings).toEqual(c.body.warnings)

    const fixed = steps.map((s) => (s.key === 'clean' ? { ...s, after: ['cast'] } : s))
    const u = await manager.put(`/api/routings/${c.body.id}`, { code: 'loose-studs', name: 'Loose studs', steps: fixed, version: c.body.version })
    expect(u.status).toBe(200)
    expect(u.body.warnings).toEqual([])
  })
})
