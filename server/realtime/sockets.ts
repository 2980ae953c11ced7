// Socket.IO: authenticated by the same session cookie; each user joins only their workshop's room.
import type { RequestHandler } from 'express'
import type { PassportStatic } from 'passport'
type Authenticator = InstanceType<PassportStatic['Passport']>
import type { Server } from 'socket.io'
import type { ClientToServerEvents, ServerToClientEvents } from '../../shared/events'
import type { SessionUser } from '../../shared/schemas/session'
import type { Realtime } from './hub'

export function attachSockets(
  io: Server<ClientToServerEvents, ServerToClientEvents>,
  o: { sessionMiddleware: RequestHandler; passport: Authenticator; realtime: Realtime },
) {
  io.engine.use(o.sessionMiddleware)
  io.engine.use(o.passport.session())
  io.use((socket, next) => {
    const user = (socket.request as { user?: SessionUser }).user
    if (!user) return next(new Error('not signed in'))
    next()
  })
  io.on('connection', (socket) => {
    const user = (socket.request as unknown as { user: SessionUser }).user
    // Rooms are decided here from the session; clients cannot ask to join any room.
    socket.join(`workshop:${user.workshopId}`)
    const planner = user.role === 'owner' || user.role === 'manager'
    if (planner) socket.join(`workshop:${user.workshopId}:planners`)
    socket.on('changes:since', (seq, ack) => {
      if (typeof ack !== 'function') return
      const n = Number(seq)
      ack(Number.isFinite(n) ? o.realtime.since(user.workshopId, n, planner) : [])
    })
  })
  o.realtime.attach(io)
}
