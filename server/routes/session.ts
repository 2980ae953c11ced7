// Sign-in, sign-out and who is signed in.
import { sql } from 'drizzle-orm'
import type { Request } from 'express'
import { health, sessionInfo, signedOut, signIn, type SessionUser } from '../../shared/schemas/session'
import { AppError } from '../errors/app-error'
import { route } from '../lib/route'
import { csrfToken } from '../middleware/csrf'
import { EVERYONE } from '../../shared/domain/roles'

function authenticate(req: Request, passport: NonNullable<import('../lib/route').Deps['passport']>): Promise<SessionUser> {
  return new Promise((resolve, reject) => {
    passport.authenticate('local', (err: unknown, user: SessionUser | false, info?: { message?: string }) => {
      if (err) return reject(err)
      if (!user) return reject(new AppError({ code: 'unauthenticated', message: info?.message ?? 'The e-mail or password is not right.' }))
      resolve(user)
    })(req, req.res!, () => {})
  })
}

export const sessionRoutes = [
  route({
    method: 'get',
    path: '/health',
    roles: 'public',
    summary: 'Liveness with a database check',
    response: health,
    handler: async ({ deps }) => {
      try {
        await deps.db.execute(sql`select 1`)
        return { ok: true }
      } catch {
        throw new AppError({ code: 'unavailable', message: 'The database is not reachable just now.' })
      }
    },
  }),
  route({
    method: 'get',
    path: '/session',
    roles: 'public',
    summary: 'The signed-in user (or null) and the CSRF token',
    response: sessionInfo,
    handler: async ({ req }) => {
      // A session that already has its token is left as it is (no write); a new token is saved before it is handed out.
      const isNew = !req.session.csrfToken
      const token = csrfToken(req)
      if (isNew) await new Promise<void>((r, j) => req.session.save((e) => (e ? j(e) : r())))
      return { user: (req.user as SessionUser | undefined) ?? null, csrfToken: token }
    },
  }),
  route({
    method: 'post',
    path: '/session',
    roles: 'public',
    summary: 'Sign in',
    body: signIn,
    response: sessionInfo,
    handler: async ({ req, deps }) => {
      const user = await authenticate(req, deps.passport!)
      // req.login regenerates the session id (no fixation); the CSRF token is renewed with it.
      await new Promise<void>((r, j) => req.login(user, (e) => (e ? j(e) : r())))
      if (user.role === 'bench') req.session.cookie.maxAge = (deps.accounts?.benchSessionDays ?? 30) * 86_400_000
      const token = csrfToken(req)
      await new Promise<void>((r, j) => req.session.save((e) => (e ? j(e) : r())))
      return { user, csrfToken: token }
    },
  }),
  route({
    method: 'delete',
    path: '/session',
    roles: EVERYONE,
    summary: 'Sign out (the session is destroyed on the server)',
    response: signedOut,
    handler: async ({ req, res, deps }) => {
      const sessionId = req.sessionID
      await new Promise<void>((r, j) => req.logout((e) => (e ? j(e) : r())))
      await new Promise<void>((r) => req.session.destroy(() => r()))
      // Live connections opened with this session stop receiving the workshop's events.
      deps.realtime.endSessions({ sessionId })
      res.clearCookie('millgrain.sid')
      return { ok: true }
    },
  }),
]
