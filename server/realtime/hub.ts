// Fan-out of change events to a workshop's room, numbered so a client that reconnects can catch up.
import type { Server } from 'socket.io'
import type { ClientToServerEvents, EventName, ServerToClientEvents } from '../../shared/events'

export interface RecordedEvent { seq: number; event: EventName; payload: unknown }

export class Realtime {
  private io: Server<ClientToServerEvents, ServerToClientEvents> | null = null
  private seq = 0
  private readonly recent = new Map<number, RecordedEvent[]>()

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
    ;(this.io?.to(`workshop:${workshopId}`) as any)?.emit(event, full)
  }

  since(workshopId: number, seq: number): RecordedEvent[] {
    return (this.recent.get(workshopId) ?? []).filter((e) => e.seq > seq)
  }

  get currentSeq() {
    return this.seq
  }
}
