// Socket.IO: authenticated by the same session cookie; each user joins only their workshop's room; connections end with their session.
import type { RequestHandler } from 'express'
import type { Store } from 'express-session'
import type { PassportStatic } from 'passport'
type Authenticator = InstanceType<PassportStatic['Passport']>
import type { Server } from 'socket.io'
import type { ClientToServerEvents, ServerToClientEvents } from '../../shared/events'
import type { SessionUser } from '../../shared/schemas/session'
import { sessionRoom, userRoom, type Realtime } from './hub'

interface SocketRequest {
  user?: SessionUser
  sessionID?: string
  sessionStore?: Store
}

export function attachSockets(
  io: Server<ClientToServerEvents, ServerToClientEvents>,
  o: { sessionMiddleware: RequestHandler; passport: Authenticator; realtime: Realtime; /** config.SOCKET_SESSION_SWEEP_MS */ sweepMs: number },
) {
  io.engine.use(o.sessionMiddleware)
  io.engine.use(o.passport.session())
  io.use((socket, next) => {
    const user = (socket.request as SocketRequest).user
    if (!user) return next(new Error('not signed in'))
    next()
  })
  io.on('connection', (socket) => {
    const req = socket.request as SocketRequest
    const user = req.user!
    socket.data.userId = user.id
    socket.data.sessionId = req.sessionID
    // Rooms are decided here from the session; clients cannot ask to join any room.
    socket.join(`workshop:${user.workshopId}`)
    // So a sign-out or a user switched off on any instance reaches this connection (Realtime.endSessions).
    socket.join(userRoom(user.id))
    if (req.sessionID) socket.join(sessionRoom(req.sessionID))
    const planner = user.role === 'owner' || user.role === 'manager'
    if (planner) socket.join(`workshop:${user.workshopId}:planners`)
    socket.on('changes:since', (seq, ack) => {
      if (typeof ack !== 'function') return
      const n = Number(seq)
      if (!Number.isFinite(n)) return ack([])
      o.realtime.since(user.workshopId, n, planner).then(ack, (err) => {
        console.error('[realtime] catch-up failed:', (err as Error).message)
        ack([])
      })
    })
  })
  // Sessions also end without a request here (idle expiry, another process): connections whose session is gone are closed.
  const sweep = setInterval(() => {
    for (const s of io.of('/').sockets.values()) {
      const req = s.request as SocketRequest
      if (!req.sessionStore || !req.sessionID) continue
      req.sessionStore.get(req.sessionID, (err, sess) => {
        if (!err && !(sess as { passport?: { user?: unknown } } | null | undefined)?.passport?.user) s.disconnect(true)
      })
    }
  }, o.sweepMs)
  sweep.unref()
  io.httpServer?.once('close', () => clearInterval(sweep))
  o.realtime.attach(io)
}
