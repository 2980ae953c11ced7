// Fan-out of change events to a workshop's room, numbered so a client that reconnects can catch up.
import type { Server } from 'socket.io'
import type { ClientToServerEvents, EventName, ServerToClientEvents } from '../../shared/events'

export interface RecordedEvent { seq: number; event: EventName; payload: unknown }
export interface SessionEnd { userId?: number; sessionId?: string }

/** Events only the planners (owner, manager) receive: drafts and planner progress are theirs until published. */
export const PLANNER_EVENTS = new Set<EventName>(['plan:progress', 'plan:drafted', 'plan:discarded'])
export const roomOf = (workshopId: number, event: EventName) => (PLANNER_EVENTS.has(event) ? `workshop:${workshopId}:planners` : `workshop:${workshopId}`)

export class Realtime {
  private io: Server<ClientToServerEvents, ServerToClientEvents> | null = null
  private seq = 0
  private readonly recent = new Map<number, RecordedEvent[]>()
  private readonly listeners: ((workshopId: number, event: EventName) => void)[] = []
  private readonly enders: ((who: SessionEnd) => void)[] = []

  attach(io: Server<ClientToServerEvents, ServerToClientEvents>) {
    this.io = io
  }

  /** Sends an event to one workshop's room; call only after the transaction committed. */
  emit(workshopId: number, event: EventName, payload: Record<string, unknown>) {
    const seq = ++this.seq
    const full = { ...payload, seq }
    const list = this.recent.get(workshopId) ?? []
    list.push({ seq, event, payload: full })
    if (list.length > 5000) list.splice(0, list.length - 5000)
    this.recent.set(workshopId, list)
    for (const fn of this.listeners) fn(workshopId, event)
    ;(this.io?.to(roomOf(workshopId, event)) as any)?.emit(event, full)
  }

  /** Progress-style events: sent live, not kept for catch-up. */
  emitTransient(workshopId: number, event: EventName, payload: Record<string, unknown>) {
    ;(this.io?.to(roomOf(workshopId, event)) as any)?.emit(event, payload)
  }

  /** Called after every recorded event (caches listen to drop stale data). */
  onChange(fn: (workshopId: number, event: EventName) => void) {
    this.listeners.push(fn)
  }

  /** Events after `seq` for a client that reconnects; planner-only events only for planners. */
  since(workshopId: number, seq: number, planner = false): RecordedEvent[] {
    return (this.recent.get(workshopId) ?? []).filter((e) => e.seq > seq && (planner || !PLANNER_EVENTS.has(e.event)))
  }

  /** Disconnects the live connections of a session that ended (sign-out) or of a user who was switched off or changed role. */
  endSessions(who: SessionEnd) {
    for (const fn of this.enders) fn(who)
  }

  onEndSessions(fn: (who: SessionEnd) => void) {
    this.enders.push(fn)
  }

  get currentSeq() {
    return this.seq
  }
}
