// Live board: connection states, duplicate-free delivery by seq, catch-up with changes:since after a reconnect, and the debounced reload.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { LiveChannel } from '@/realtime/socket'
import { createDebounce } from '@/lib/debounce'
import { FakeSocket } from './fake-socket'

const ev = (seq: number, id = seq) => ({ id, seq, operationId: id })

describe('connection state', () => {
  it('when the socket connects, drops and retries, then the state reads connected, reconnecting, then offline after repeated failures', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s, { offlineAfterAttempts: 3 })
    expect(ch.state.value).toBe('connecting')
    s.serverConnects()
    expect(ch.state.value).toBe('connected')
    s.drops()
    expect(ch.state.value).toBe('reconnecting')
    s.fireManager('reconnect_attempt', 1)
    expect(ch.state.value).toBe('reconnecting')
    s.fireManager('reconnect_attempt', 4)
    expect(ch.state.value).toBe('offline')
    s.serverConnects()
    expect(ch.state.value).toBe('connected')
  })
})

describe('delivery by seq', () => {
  it('when the same event arrives twice, then it is delivered once', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const got: number[] = []
    ch.onAnyChange((p) => got.push(p.seq as number))
    s.serverConnects()
    s.fire('plan:changed', ev(1))
    s.fire('plan:changed', ev(1))
    s.fire('order:updated', ev(2))
    expect(got).toEqual([1, 2])
    expect(ch.lastSeq).toBe(2)
  })

  it('when the planner reports progress, then it reaches its subscribers without touching the seq', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const seen: unknown[] = []
    ch.on('plan:progress', (p) => seen.push(p))
    s.fire('plan:progress', { runId: 'r', iteration: 5, weightedTardiness: 100, makespan: 2000, elapsedMs: 300 })
    expect(seen).toHaveLength(1)
    expect(ch.lastSeq).toBe(0)
  })
})

describe('catch-up after a reconnect', () => {
  beforeEach(() => vi.useFakeTimers())
  afterEach(() => vi.useRealTimers())

  it('when the connection comes back, then it asks changes:since the last seq, replays only what it missed, then resyncs', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const got: number[] = []
    const resyncs: number[][] = []
    ch.onAnyChange((p) => got.push(p.seq as number))
    ch.onResync((missed) => resyncs.push(missed.map((m) => m.seq)))
    s.serverConnects()
    s.fire('plan:changed', ev(4))
    s.drops()
    s.serverConnects()
    expect(s.asks.map((a) => a.seq)).toEqual([4])
    // One event came live after the reconnect but before the answer: not delivered twice.
    s.fire('plan:published', ev(7))
    s.asks[0]!.ack([
      { seq: 5, event: 'plan:changed', payload: ev(5) },
      { seq: 6, event: 'order:created', payload: ev(6) },
      { seq: 7, event: 'plan:published', payload: ev(7) },
    ])
    expect(got).toEqual([4, 7, 5, 6])
    expect(resyncs).toEqual([[5, 6]])
    expect(ch.lastSeq).toBe(7)
  })

  it('when the first connection is made, then nothing is asked (the board loads fresh anyway)', () => {
    const s = new FakeSocket()
    new LiveChannel(s)
    s.serverConnects()
    expect(s.asks).toEqual([])
  })

  it('when no event was ever seen, then a reconnect resyncs straight away without asking', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const resync = vi.fn()
    ch.onResync(resync)
    s.serverConnects()
    s.drops()
    s.serverConnects()
    expect(s.asks).toEqual([])
    expect(resync).toHaveBeenCalledTimes(1)
  })

  it('when the server does not answer the catch-up, then it resyncs after the timeout', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s, { catchUpTimeoutMs: 2000 })
    const resync = vi.fn()
    ch.onResync(resync)
    s.serverConnects()
    s.fire('plan:changed', ev(3))
    s.drops()
    s.serverConnects()
    expect(resync).not.toHaveBeenCalled()
    vi.advanceTimersByTime(2000)
    expect(resync).toHaveBeenCalledTimes(1)
    // A late answer changes nothing.
    s.asks[0]!.ack([{ seq: 4, event: 'plan:changed', payload: ev(4) }])
    expect(resync).toHaveBeenCalledTimes(1)
  })

  it('when the numbering started again far below (a new database), then new events still arrive and the board resyncs', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const got: number[] = []
    const resync = vi.fn()
    ch.onAnyChange((p) => got.push(p.seq as number))
    ch.onResync(resync)
    s.serverConnects()
    s.fire('plan:changed', ev(5000))
    s.fire('plan:changed', ev(1))
    s.fire('plan:changed', ev(2))
    expect(got).toEqual([5000, 1, 2])
    expect(ch.lastSeq).toBe(2)
    expect(resync).toHaveBeenCalledTimes(1)
  })

  it("when another instance's event overtakes one with a smaller number, then both are delivered once, without a resync", () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s)
    const got: number[] = []
    const resync = vi.fn()
    ch.onAnyChange((p) => got.push(p.seq as number))
    ch.onResync(resync)
    s.serverConnects()
    s.fire('plan:changed', ev(41))
    s.fire('plan:changed', ev(40))
    s.fire('plan:changed', ev(40))
    s.fire('plan:changed', ev(42))
    expect(got).toEqual([41, 40, 42])
    expect(ch.lastSeq).toBe(42)
    expect(resync).not.toHaveBeenCalled()
  })

  it('when the server refused the connection (session not ready), then it tries again by itself', () => {
    const s = new FakeSocket()
    const ch = new LiveChannel(s, { retryAfterRefusalMs: 1000 })
    s.active = false
    s.fire('connect_error', new Error('not signed in'))
    expect(ch.state.value).toBe('connecting')
    vi.advanceTimersByTime(1000)
    expect(ch.state.value).toBe('connected')
  })
})

describe('debounced reload', () => {
  beforeEach(() => vi.useFakeTimers())
  afterEach(() => vi.useRealTimers())

  it('when events come in a burst, then the board reloads once 150 ms after the last', () => {
    const fn = vi.fn()
    const d = createDebounce(fn, 150, 1000)
    d()
    vi.advanceTimersByTime(100)
    d()
    vi.advanceTimersByTime(100)
    d()
    expect(fn).not.toHaveBeenCalled()
    vi.advanceTimersByTime(150)
    expect(fn).toHaveBeenCalledTimes(1)
  })

  it('when events never stop, then it still reloads at least once a second', () => {
    const fn = vi.fn()
    const d = createDebounce(fn, 150, 1000)
    for (let t = 0; t < 1100; t += 100) {
      d()
      vi.advanceTimersByTime(100)
    }
    expect(fn).toHaveBeenCalledTimes(1)
  })
})
