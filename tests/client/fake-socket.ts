// A socket.io-client stand-in for client tests: the test plays the server.
import type { SocketLike } from '@/realtime/socket'

type Fn = (...args: any[]) => void

/** A socket.io-client stand-in: the test plays the server. */
export class FakeSocket implements SocketLike {
  connected = false
  active = true
  private handlers = new Map<string, Fn[]>()
  private managerHandlers = new Map<string, Fn[]>()
  /** What the client asked for with changes:since, and the ack to answer it. */
  asks: { seq: number; ack: Fn }[] = []
  io = {
    on: (event: string, fn: Fn) => {
      this.managerHandlers.set(event, [...(this.managerHandlers.get(event) ?? []), fn])
    },
  }
  on(event: string, fn: Fn) {
    this.handlers.set(event, [...(this.handlers.get(event) ?? []), fn])
  }
  off() {}
  emit(event: string, ...args: unknown[]) {
    if (event === 'changes:since') this.asks.push({ seq: args[0] as number, ack: args[1] as Fn })
  }
  connect() {
    this.serverConnects()
  }
  disconnect() {
    this.connected = false
    this.fire('disconnect', 'io client disconnect')
  }
  fire(event: string, ...args: unknown[]) {
    for (const fn of this.handlers.get(event) ?? []) fn(...args)
  }
  fireManager(event: string, ...args: unknown[]) {
    for (const fn of this.managerHandlers.get(event) ?? []) fn(...args)
  }
  serverConnects() {
    this.connected = true
    this.fire('connect')
  }
  drops() {
    this.connected = false
    this.fire('disconnect', 'transport close')
  }
}
