// Fan-out of change events to a workshop's room, numbered so a client that reconnects can catch up.
import type { Server } from 'socket.io'
import type { ClientToServerEvents, EventName, ServerToClientEvents } from '../../shared/events'

export interface RecordedEvent { seq: number; event: EventName; payload: unknown }

export class Realtime {
  private io: Server<ClientToServerEvents, ServerToClientEvents> | null = null
  private seq = 0
  private readonly recent = new Map<number, RecordedEvent[]>()
  private readonly listeners: ((workshopId: number, event: EventName) => void)[] = []

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
    ;(this.io?.to(`workshop:${workshopId}`) as any)?.emit(event, full)
  }

  /** Progress-style events: sent live, not kept for catch-up. */
  emitTransient(workshopId: number, event: EventName, payload: Record<string, unknown>) {
    ;(this.io?.to(`workshop:${workshopId}`) as any)?.emit(event, payload)
  }

  /** Called after every recorded event (caches listen to drop stale data). */
  onChange(fn: (workshopId: number, event: EventName) => void) {
    this.listeners.push(fn)
  }

  since(workshopId: number, seq: number): RecordedEvent[] {
    return (this.recent.get(workshopId) ?? []).filter((e) => e.seq > seq)
  }

  get currentSeq() {
    return this.seq
  }
}
