// The app cache against real PostgreSQL with two hubs standing for two instances: a change recorded by one makes the
// other's entries stale even before its note arrives, notes drop entries, and a lost listening connection comes back.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Cache } from '../../server/lib/cache'
import { Realtime } from '../../server/realtime/hub'
import { createTestDb, type TestDb } from '../setup/db'
import { firstWorkshopId } from '../setup/fixtures'

let d: TestDb
let workshopId: number
const hubs: Realtime[] = []
const hub = () => {
  const r = new Realtime()
  r.useDatabase(d.pool)
  hubs.push(r)
  return r
}
const verified = { ttlMs: 60_000, verify: true }

beforeAll(async () => {
  d = await createTestDb()
  workshopId = await firstWorkshopId(d.db)
})
afterAll(async () => {
  for (const r of hubs) await r.close()
  await d?.drop()
})

const waitFor = async (what: string, ok: () => boolean, ms = 10_000) => {
  const end = Date.now() + ms
  while (!ok()) {
    if (Date.now() > end) throw new Error(`${what} did not happen within ${ms} ms`)
    await new Promise((r) => setTimeout(r, 20))
  }
}

describe('two instances, one database', () => {
  it('when A records a change whose note B has not heard yet, then B loads again for a verified entry (and only an unverified one stays old)', async () => {
    const a = hub()
    const b = hub() // not listening: stands for the moment before the note arrives
    const cache = new Cache(b)
    let version = 1
    const load = () => version
    expect(await cache.get(workshopId, 'board', load, verified)).toBe(1)
    expect(await cache.get(workshopId, 'plain', load, { ttlMs: 60_000 })).toBe(1)
    version = 2
    a.emit(workshopId, 'plan:changed', { id: 1, operationId: 1 })
    await a.flush()
    expect(await cache.get(workshopId, 'board', load, verified)).toBe(2)
    // The same entry without the check is what a cache that trusts notes alone would answer.
    expect(await cache.get(workshopId, 'plain', load, { ttlMs: 60_000 })).toBe(1)
    // Nothing changed since: the verified entry is answered from the cache.
    version = 3
    expect(await cache.get(workshopId, 'board', load, verified)).toBe(2)
  })

  it("when B listens and A records a change, then the note drops B's entries of that workshop only", async () => {
    const a = hub()
    const b = hub()
    await b.listen(d.url)
    const cache = new Cache(b)
    await cache.get(workshopId, 'x', () => 'old', { ttlMs: 60_000 })
    await cache.get(workshopId + 1000, 'y', () => 'other workshop', { ttlMs: 60_000 })
    expect(cache.size).toBe(2)
    a.emit(workshopId, 'order:updated', { id: 1, version: 2 })
    await waitFor('the note reaching B', () => cache.size === 1)
    expect(await cache.get(workshopId + 1000, 'y', () => 'reloaded', { ttlMs: 60_000 })).toBe('other workshop')
  })

  it('when a load began before a change, then its result is answered but not kept', async () => {
    const b = hub()
    const cache = new Cache(b)
    let release!: () => void
    const slow = cache.get(
      workshopId,
      'slow',
      () =>
        new Promise<string>((r) => {
          release = () => r('before the change')
        }),
      { ttlMs: 60_000 },
    )
    await new Promise((r) => setTimeout(r, 10))
    b.emit(workshopId, 'order:updated', { id: 1, version: 3 })
    release()
    expect(await slow).toBe('before the change')
    expect(await cache.get(workshopId, 'slow', () => 'after', { ttlMs: 60_000 })).toBe('after')
    await b.flush()
  })

  it("when B's listening connection is cut, then B drops everything it cached and hears notes again once reconnected", async () => {
    const a = hub()
    const b = hub()
    await b.listen(d.url)
    const cache = new Cache(b)
    await cache.get(workshopId, 'k', () => 1, { ttlMs: 60_000 })
    expect(b.listening).toBe(true)
    // Cut B's listening connection (the newest one: B started listening last).
    // Raw SQL on purpose: PostgreSQL's own pg_stat_activity and pg_terminate_backend, not our schema.
    const { rows: cut } = await d.pool.query(
      `select pg_terminate_backend(pid) from pg_stat_activity where datname = current_database() and query ilike 'listen millgrain_changes%' order by backend_start desc limit 1`,
    )
    expect(cut).toHaveLength(1)
    await waitFor('the cache being emptied', () => cache.size === 0 && !b.listening)
    await waitFor('B listening again', () => b.listening)
    await cache.get(workshopId, 'k2', () => 2, { ttlMs: 60_000 })
    expect(cache.size).toBe(1)
    a.emit(workshopId, 'order:updated', { id: 1, version: 4 })
    await a.flush()
    await waitFor('the note reaching B after the reconnect', () => cache.size === 0)
  })
})
