// Fan-out of change events to a workshop's room, numbered by PostgreSQL so a client that reconnects — to this app
// instance or another one over the same database — can catch up; and word of changes made by other instances.
import { createHash, randomBytes } from 'node:crypto'
import pg from 'pg'
import type { Server } from 'socket.io'
import type { ClientToServerEvents, EventName, ServerToClientEvents } from '../../shared/events'
import { LOCK } from '../lib/locks'
import { currentOrigin } from './origin'

export interface RecordedEvent {
  seq: number
  event: EventName
  payload: unknown
}
/** What an event carries, as declared in shared/events.ts; the hub adds `seq`. */
export type EventPayload<E extends EventName> = Omit<Parameters<ServerToClientEvents[E]>[0], 'seq'>
/** Socket.IO's typed emit cannot follow a generic event name; payloads are checked by emit's own signature instead. */
type RoomEmitter = { emit(event: EventName, payload: unknown): void }
export interface SessionEnd {
  userId?: number
  sessionId?: string
}

/** Events only the planners (owner, manager) receive: drafts, planner progress and how runs end are theirs until published. */
export const PLANNER_EVENTS = new Set<EventName>(['plan:progress', 'plan:drafted', 'plan:discarded', 'plan:failed', 'plan:ended'])
export const roomOf = (workshopId: number, event: EventName) => (PLANNER_EVENTS.has(event) ? `workshop:${workshopId}:planners` : `workshop:${workshopId}`)
/** Rooms every socket joins so a session or user can be ended on every instance (names never carry the session id itself). */
export const userRoom = (userId: number) => `user:${userId}`
export const sessionRoom = (sessionId: string) => `session:${createHash('sha256').update(sessionId).digest('base64url').slice(0, 22)}`

/** NOTIFY channel: "a change was recorded in workshop w (seq s)", or "drop what you cached for w". */
export const CHANGES_CHANNEL = 'millgrain_changes'
/** Events kept per workshop for catch-up; older ones are pruned. */
export const KEPT_EVENTS = 5000
const PRUNE_EVERY = 200

/** What travels on CHANGES_CHANNEL: instance, workshop, seq (0 = a drop without an event), and an optional cache key. */
interface ChangeNote {
  i: string
  w: number
  s: number
  k?: string
}
type ChangeListener = (workshopId: number, seq: number, key?: string) => void

// One statement, its own transaction: the per-workshop lock makes numbers commit in the order they are handed out
// (a client that saw seq n never misses a smaller one committed later), the row is written, and the other instances hear of it.
const RECORD_SQL = `
with l as (select pg_advisory_xact_lock($1, $2)),
ins as (insert into realtime_events (workshop_id, event, payload) select $2, $3, $4::jsonb from l returning seq)
select seq, pg_notify('${CHANGES_CHANNEL}', json_build_object('i', $5::text, 'w', $2::int, 's', seq)::text) from ins`

export class Realtime {
  /** This process, so it ignores its own notes. */
  readonly instanceId = randomBytes(6).toString('hex')
  private io: Server<ClientToServerEvents, ServerToClientEvents> | null = null
  private pool: pg.Pool | null = null
  /** Without a database (scripts, the first plan at setup): numbered and kept in memory as before. */
  private memSeq = 0
  private readonly memRecent = new Map<number, RecordedEvent[]>()
  /** Inserts and broadcasts of this process run one after another, in the order emit was called. */
  private queue: Promise<void> = Promise.resolve()
  private recorded = 0
  private readonly listeners: ChangeListener[] = []
  private readonly resetListeners: (() => void)[] = []
  private listenClient: pg.Client | null = null
  private listenReady = false
  private readonly seqBatches = new Map<number, Promise<number>>()
  private listenRetry: ReturnType<typeof setTimeout> | null = null
  private closed = false

  /** Records events in PostgreSQL (realtime_events) instead of memory. */
  useDatabase(pool: pg.Pool) {
    this.pool = pool
  }

  attach(io: Server<ClientToServerEvents, ServerToClientEvents>) {
    this.io = io
  }

  /**
   * Sends an event to one workshop's room; call only after the transaction committed. Returns at once: this
   * instance's caches drop the workshop now, and the numbered row, the note to other instances and the broadcast
   * follow in order (`flush()` waits for them; the API answers only after they are done).
   */
  emit<E extends EventName>(workshopId: number, event: E, given: EventPayload<E>) {
    for (const fn of this.listeners) fn(workshopId, 0)
    // Read now, inside the request's async context: the tab that asked for the change (its own echo is skipped there).
    const origin = currentOrigin()
    const payload = origin ? { ...given, origin } : given
    if (!this.pool) {
      const seq = ++this.memSeq
      const full = { ...payload, seq }
      const list = this.memRecent.get(workshopId) ?? []
      list.push({ seq, event, payload: full })
      if (list.length > KEPT_EVENTS) list.splice(0, list.length - KEPT_EVENTS)
      this.memRecent.set(workshopId, list)
      this.room(workshopId, event)?.emit(event, full)
      return
    }
    const pool = this.pool
    this.queue = this.queue.then(async () => {
      let seq: number | null = null
      try {
        const r = await pool.query(RECORD_SQL, [LOCK.changeEvents, workshopId, event, JSON.stringify(payload), this.instanceId])
        seq = Number(r.rows[0].seq)
      } catch (err) {
        // The change itself is committed; clients still hear of it, they just cannot catch up on this one.
        if (!this.closed) console.error(`[realtime] could not record ${event}:`, (err as Error).message)
      }
      this.room(workshopId, event)?.emit(event, seq === null ? payload : { ...payload, seq })
      if (seq !== null && ++this.recorded % PRUNE_EVERY === 0) await this.prune(workshopId)
    })
  }

  /** Resolves once every event emitted so far is recorded and sent. */
  flush(): Promise<void> {
    return this.queue
  }

  private async prune(workshopId: number) {
    await this.pool!.query(
      `delete from realtime_events where workshop_id = $1 and seq <= (select seq from realtime_events where workshop_id = $1 order by seq desc offset ${KEPT_EVENTS} limit 1)`,
      [workshopId],
    ).catch((err) => console.error('[realtime] prune failed:', (err as Error).message))
  }

  /** Progress-style events: sent live (through the adapter to every instance), not kept for catch-up. */
  emitTransient<E extends EventName>(workshopId: number, event: E, payload: EventPayload<E>) {
    this.room(workshopId, event)?.emit(event, payload)
  }

  private room(workshopId: number, event: EventName): RoomEmitter | undefined {
    return this.io?.to(roomOf(workshopId, event)) as RoomEmitter | undefined
  }

  /**
   * Called on every change of a workshop, made here (at once, seq 0) or on another instance (its seq; 0 with a key
   * for a plain cache drop). Caches listen to drop stale data.
   */
  onChange(fn: ChangeListener) {
    this.listeners.push(fn)
  }

  /** Called when notes from other instances may have been missed (the listening connection was lost): drop everything. */
  onReset(fn: () => void) {
    this.resetListeners.push(fn)
  }

  /** Tells the other instances to drop what they cached for a workshop (or one key of it) without recording an event. */
  announceDrop(workshopId: number, key?: string) {
    if (!this.pool || this.closed || (this.pool as pg.Pool & { ending?: boolean }).ending) return
    const note: ChangeNote = { i: this.instanceId, w: workshopId, s: 0, ...(key ? { k: key } : {}) }
    this.pool.query('select pg_notify($1, $2)', [CHANGES_CHANNEL, JSON.stringify(note)]).catch((err) => {
      if (!this.closed) console.error('[realtime] could not announce a cache drop:', (err as Error).message)
    })
  }

  /** Events after `seq` for a client that reconnects; planner-only events only for planners. */
  async since(workshopId: number, seq: number, planner = false): Promise<RecordedEvent[]> {
    if (!this.pool) return (this.memRecent.get(workshopId) ?? []).filter((e) => e.seq > seq && (planner || !PLANNER_EVENTS.has(e.event)))
    const hidden = planner ? [] : [...PLANNER_EVENTS]
    const r = await this.pool.query(
      `select seq, event, payload || jsonb_build_object('seq', seq) as payload from realtime_events
       where workshop_id = $1 and seq > $2 and not (event = any($3::text[])) order by seq limit ${KEPT_EVENTS}`,
      [workshopId, Math.max(0, Math.floor(seq)), hidden],
    )
    return r.rows.map((row) => ({ seq: Number(row.seq), event: row.event as EventName, payload: row.payload }))
  }

  /**
   * The highest recorded number of a workshop (0 when none): a cache entry older than this is stale. Callers arriving
   * in the same turn of the event loop share one query; a query already sent is never shared with a later caller (it
   * may have been answered before that caller's change committed).
   */
  latestSeq(workshopId: number): Promise<number> {
    if (!this.pool) return Promise.resolve(this.memSeq)
    const waiting = this.seqBatches.get(workshopId)
    if (waiting) return waiting
    const pool = this.pool
    const batch = new Promise<number>((resolve, reject) => {
      setImmediate(() => {
        this.seqBatches.delete(workshopId)
        pool
          .query('select coalesce(max(seq), 0) as seq from realtime_events where workshop_id = $1', [workshopId])
          .then((r) => resolve(Number(r.rows[0].seq)), reject)
      })
    })
    this.seqBatches.set(workshopId, batch)
    return batch
  }

  /**
   * Disconnects the live connections of a session that ended (sign-out) or of a user who was switched off or changed
   * role, on every instance (the adapter carries the request to the others).
   */
  endSessions(who: SessionEnd) {
    if (!this.io) return
    if (who.userId !== undefined) this.io.in(userRoom(who.userId)).disconnectSockets(true)
    if (who.sessionId !== undefined) this.io.in(sessionRoom(who.sessionId)).disconnectSockets(true)
  }

  /** Listens for changes made by other instances on a dedicated connection, reconnecting when it drops. */
  async listen(connectionString: string) {
    this.closed = false
    const connect = async (attempt: number) => {
      if (this.closed) return
      const client = new pg.Client({ connectionString })
      const retry = () => {
        if (this.closed || this.listenClient !== client) return
        // A connection that was up starts its backoff again from the shortest wait.
        const next = this.listenReady ? 1 : attempt + 1
        this.listenClient = null
        this.listenReady = false
        // Notes sent while we were away are lost: every cached entry may be stale.
        for (const fn of this.resetListeners) fn()
        this.listenRetry = setTimeout(() => void connect(next), Math.min(5000, 250 * 2 ** Math.min(next - 1, 5)))
        this.listenRetry.unref()
      }
      client.on('error', (err) => {
        if (!this.closed) console.error('[realtime] change listener lost its connection:', err.message)
        retry()
      })
      client.on('end', retry)
      client.on('notification', (msg) => {
        if (msg.channel !== CHANGES_CHANNEL || !msg.payload) return
        let note: ChangeNote
        try {
          note = JSON.parse(msg.payload) as ChangeNote
        } catch {
          return
        }
        if (note.i === this.instanceId || typeof note.w !== 'number') return
        for (const fn of this.listeners) fn(note.w, Number(note.s) || 0, note.k)
      })
      this.listenClient = client
      try {
        await client.connect()
        await client.query(`listen ${CHANGES_CHANNEL}`)
        this.listenReady = this.listenClient === client
        // Connected again after a loss: whatever was cached before may have missed a note.
        if (attempt > 0) for (const fn of this.resetListeners) fn()
      } catch (err) {
        if (!this.closed) console.error('[realtime] change listener could not connect:', (err as Error).message)
        client.removeAllListeners('end')
        client.end().catch(() => {})
        if (this.listenClient === client) {
          this.listenClient = null
          this.listenRetry = setTimeout(() => void connect(attempt + 1), Math.min(5000, 250 * 2 ** Math.min(attempt, 5)))
          this.listenRetry.unref()
        }
      }
    }
    await connect(0)
  }

  /** True while the connection listening for other instances' changes is up. */
  get listening() {
    return this.listenReady
  }

  /** Waits for queued events, then stops listening. */
  async close() {
    await Promise.race([this.queue, new Promise((r) => setTimeout(r, 3000))])
    this.closed = true
    this.listenReady = false
    if (this.listenRetry) clearTimeout(this.listenRetry)
    const c = this.listenClient
    this.listenClient = null
    if (c) {
      c.removeAllListeners('end')
      await c.end().catch(() => {})
    }
  }
}
