// The app's one Socket.IO connection: connection state, typed event subscription, and catch-up by seq after a reconnect.
import { shallowRef, type ShallowRef } from 'vue'
import { io } from 'socket.io-client'
import type { EventName, ServerToClientEvents } from '@shared/events'

export type ConnectionState = 'connecting' | 'connected' | 'reconnecting' | 'offline'

/** Events the server records with a `seq` (catch-up works for these); `plan:progress` is live only. */
export const RECORDED_EVENTS = [
  'order:created',
  'order:updated',
  'operation:changed',
  'jobBag:changed',
  'plan:drafted',
  'plan:published',
  'plan:discarded',
  'plan:changed',
  'plan:failed',
  'plan:ended',
  'masterdata:changed',
  'file:added',
  'file:removed',
  'quote:changed',
  'payment:received',
  'payment:refunded',
  'paymentLink:created',
  'metal:recorded',
  'refiningLot:changed',
] as const satisfies readonly EventName[]
export const LIVE_ONLY_EVENTS = ['plan:progress'] as const satisfies readonly EventName[]
/** Every event of shared/events.ts is on one of the two lists (otherwise the channel would never hear it). */
const everyEventListed: Exclude<EventName, (typeof RECORDED_EVENTS)[number] | (typeof LIVE_ONLY_EVENTS)[number]> extends never ? true : false = true
void everyEventListed

/** What one event carries, as shared/events.ts declares it. */
export type EventPayload<E extends EventName> = Parameters<ServerToClientEvents[E]>[0]

/** How far below the highest number an unseen event may arrive and still be a late one (a restart starts far lower). */
export const LATE_WINDOW = 1000
/** The most events one catch-up answer holds (the server's kept window). */
export const CATCH_UP_LIMIT = 5000

export interface CaughtUpEvent {
  seq: number
  event: string
  payload: unknown
}
type Handler = (payload: Record<string, unknown>, event: string) => void
/** `complete`: every missed event was replayed (the catch-up answered in full); false: reload what you show. */
type ResyncListener = (missed: CaughtUpEvent[], complete: boolean) => void
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- socket.io-client's own listener type; payloads are read as Record<string, unknown>
type Listener = (...args: any[]) => void

/** What the channel needs from a socket.io-client socket (a fake one in tests). */
export interface SocketLike {
  readonly connected: boolean
  readonly active?: boolean
  on(event: string, fn: Listener): unknown
  off(event: string, fn?: Listener): unknown
  emit(event: string, ...args: unknown[]): unknown
  connect(): unknown
  disconnect(): unknown
  io: { on(event: string, fn: Listener): unknown; off?(event: string, fn?: Listener): unknown }
}

export interface ChannelOptions {
  /** Failed reconnect attempts after which the state reads "offline" (still retrying). */
  offlineAfterAttempts?: number
  /** How long to wait for the catch-up answer before reloading anyway. */
  catchUpTimeoutMs?: number
  /** Delay before trying again after the server refused the connection (e.g. the session was not ready). */
  retryAfterRefusalMs?: number
}

/**
 * Wraps one socket: tracks the highest `seq` seen, drops duplicates, and after every reconnect asks
 * `changes:since(lastSeq)` to replay what was missed, then tells resync listeners to reload.
 */
export class LiveChannel {
  /** connected / reconnecting / offline, for the connection badge. */
  readonly state: ShallowRef<ConnectionState> = shallowRef('connecting')
  /** Highest event number delivered so far (0 = none yet). */
  lastSeq = 0
  /** Set once the first connection succeeded; later connections are reconnects. */
  private everConnected = false
  private attempts = 0
  private readonly delivered = new Set<number>()
  private readonly handlers = new Map<string, Set<Handler>>()
  private readonly anyHandlers = new Set<Handler>()
  private readonly resyncListeners = new Set<ResyncListener>()
  private readonly opts: Required<ChannelOptions>
  private retryTimer: ReturnType<typeof setTimeout> | null = null
  private closed = false

  constructor(
    readonly socket: SocketLike,
    opts: ChannelOptions = {},
  ) {
    this.opts = { offlineAfterAttempts: 3, catchUpTimeoutMs: 5000, retryAfterRefusalMs: 4000, ...opts }
    socket.on('connect', this.onConnect)
    socket.on('disconnect', this.onDisconnect)
    socket.on('connect_error', this.onConnectError)
    socket.io.on('reconnect_attempt', this.onReconnectAttempt)
    for (const name of RECORDED_EVENTS) socket.on(name, (p: Record<string, unknown>) => this.receive(name, p))
    for (const name of LIVE_ONLY_EVENTS) socket.on(name, (p: Record<string, unknown>) => this.dispatch(name, p))
    if (socket.connected) this.onConnect()
  }

  /** Subscribes to one event (the handler gets its declared payload); returns the unsubscribe function. */
  on<E extends EventName>(event: E, fn: (payload: EventPayload<E>, event: E) => void): () => void {
    const set = this.handlers.get(event) ?? new Set()
    const handler = fn as unknown as Handler
    set.add(handler)
    this.handlers.set(event, set)
    return () => set.delete(handler)
  }

  /** Subscribes to every recorded change event (not progress). */
  onAnyChange(fn: Handler): () => void {
    this.anyHandlers.add(fn)
    return () => this.anyHandlers.delete(fn)
  }

  /** Called after a reconnect once the missed events were replayed (complete) or could not be (reload what you show). */
  onResync(fn: ResyncListener): () => void {
    this.resyncListeners.add(fn)
    return () => this.resyncListeners.delete(fn)
  }

  close() {
    this.closed = true
    if (this.retryTimer) clearTimeout(this.retryTimer)
    this.socket.disconnect()
    this.state.value = 'offline'
  }

  /** A live event: delivered once, in order of arrival; a number lower than expected means the server restarted. */
  private receive(event: string, payload: Record<string, unknown>) {
    const seq = typeof payload?.seq === 'number' ? payload.seq : null
    if (seq === null) return this.dispatch(event, payload)
    if (this.delivered.has(seq)) return
    if (seq < this.lastSeq - LATE_WINDOW) {
      // Never seen and far below what we have: the numbering started again (a new database).
      this.delivered.clear()
      this.lastSeq = seq
      this.mark(seq)
      this.dispatch(event, payload)
      this.resync([])
      return
    }
    // A number a little below the last one is a late arrival, not a restart: several app instances number their
    // events in one database, and one instance's broadcast can overtake another's.
    this.mark(seq)
    this.dispatch(event, payload)
  }

  private mark(seq: number) {
    this.delivered.add(seq)
    if (seq > this.lastSeq) this.lastSeq = seq
    // Keep the duplicate filter small: only numbers near the top can still arrive twice.
    if (this.delivered.size > 500)
      for (const s of this.delivered) {
        if (s < this.lastSeq - 400) this.delivered.delete(s)
      }
  }

  private dispatch(event: string, payload: Record<string, unknown>) {
    for (const fn of this.handlers.get(event) ?? []) fn(payload, event)
    if ((RECORDED_EVENTS as readonly string[]).includes(event)) for (const fn of this.anyHandlers) fn(payload, event)
  }

  private resync(missed: CaughtUpEvent[], complete = false) {
    for (const fn of this.resyncListeners) fn(missed, complete)
  }

  /** Asks the server for everything after `lastSeq` and replays what was not delivered live meanwhile. */
  private catchUp() {
    const since = this.lastSeq
    if (since === 0) return this.resync([])
    let answered = false
    const timer = setTimeout(() => {
      if (answered) return
      answered = true
      this.resync([])
    }, this.opts.catchUpTimeoutMs)
    this.socket.emit('changes:since', since, (events: CaughtUpEvent[]) => {
      if (answered) return
      answered = true
      clearTimeout(timer)
      // A full page may have left some out (the server answers at most its kept window).
      const complete = Array.isArray(events) && events.length < CATCH_UP_LIMIT
      const missed = (Array.isArray(events) ? events : []).filter((e) => e.seq > since && !this.delivered.has(e.seq)).sort((a, b) => a.seq - b.seq)
      for (const e of missed) {
        this.mark(e.seq)
        this.dispatch(e.event, (e.payload ?? {}) as Record<string, unknown>)
      }
      this.resync(missed, complete)
    })
  }

  private onConnect = () => {
    this.state.value = 'connected'
    this.attempts = 0
    if (this.everConnected) this.catchUp()
    this.everConnected = true
  }

  private onDisconnect = (reason: string) => {
    if (this.closed || reason === 'io client disconnect') {
      this.state.value = 'offline'
      return
    }
    this.state.value = 'reconnecting'
    // The server closed it on purpose: socket.io does not come back by itself.
    if (reason === 'io server disconnect') this.retrySoon()
  }

  private onConnectError = () => {
    this.attempts++
    this.state.value = this.attempts >= this.opts.offlineAfterAttempts ? 'offline' : this.everConnected ? 'reconnecting' : 'connecting'
    // Refused by the server's middleware (not signed in yet): socket.io will not retry on its own.
    if (this.socket.active === false) this.retrySoon()
  }

  private onReconnectAttempt = (attempt: number) => {
    this.state.value = attempt > this.opts.offlineAfterAttempts ? 'offline' : 'reconnecting'
  }

  private retrySoon() {
    if (this.retryTimer || this.closed) return
    this.retryTimer = setTimeout(() => {
      this.retryTimer = null
      if (!this.closed && !this.socket.connected) this.socket.connect()
    }, this.opts.retryAfterRefusalMs)
  }
}

let shared: LiveChannel | null = null
let users = 0

/** The shared channel (same-origin, the session cookie authenticates it); released when the last user lets go. */
export function acquireLiveChannel(): LiveChannel {
  if (!shared) shared = new LiveChannel(io({ withCredentials: true, reconnectionDelay: 500, reconnectionDelayMax: 4000 }) as unknown as SocketLike)
  users++
  return shared
}

export function releaseLiveChannel(channel: LiveChannel) {
  if (channel !== shared) return
  users = Math.max(0, users - 1)
  if (users === 0) {
    shared.close()
    shared = null
  }
}
