// Sign-in with passport-local, sessions in PostgreSQL, and the per-route role check.
import { verify } from '@node-rs/argon2'
import connectPgSimple from 'connect-pg-simple'
import { eq } from 'drizzle-orm'
import type { Request, RequestHandler } from 'express'
import session, { type SessionData } from 'express-session'
import passport from 'passport'
import { Strategy as LocalStrategy } from 'passport-local'
import type pg from 'pg'
import type { Config } from '../config'
import type { Db } from '../db/client'
import { people, users, workshops } from '../db/schema/index'
import { AppError } from '../errors/app-error'
import type { Access, Actor } from '../lib/route'
import { ANY_WORKSHOP, cachedOr, type Cache } from '../lib/cache'
import { sessionUserKey } from '../lib/session-users'
import type { SessionUser } from '../../shared/schemas/session'

// A hash to verify against when the e-mail is unknown, so timing does not reveal which addresses exist.
const DUMMY_HASH = '$argon2id$v=19$m=19456,t=2,p=1$c29tZXNhbHRzb21lc2FsdA$W5CGbW6oN9cFs9Rz1b1N0VqC0n3FJQ7m8pQmYb3dZ2k'

// Signed-in users are looked up on every request; a short stay in the app's cache spares the database, and changes to a
// user drop their entry here and on every other instance (services call dropSessionUsers in lib/session-users.ts with deps.cache).
const cacheByDb = new WeakMap<Db, Cache>()
const USER_CACHE_MS = 2000
/** Signed-in users of this database are kept in the app's cache (createApp). */
export function useSessionUserCache(db: Db, cache: Cache) {
  cacheByDb.set(db, cache)
}

function cachedSessionUser(db: Db, userId: number): Promise<SessionUser | null> {
  return cachedOr(cacheByDb.get(db), ANY_WORKSHOP, sessionUserKey(userId), () => loadSessionUser(db, userId), { ttlMs: USER_CACHE_MS })
}

export async function loadSessionUser(db: Db, userId: number): Promise<SessionUser | null> {
  const rows = await db
    .select({
      id: users.id,
      email: users.email,
      name: users.name,
      role: users.role,
      active: users.active,
      workshopId: users.workshopId,
      workshopName: workshops.name,
      personId: people.id,
    })
    .from(users)
    .innerJoin(workshops, eq(workshops.id, users.workshopId))
    .leftJoin(people, eq(people.userId, users.id))
    .where(eq(users.id, userId))
  const u = rows[0]
  if (!u || !u.active) return null
  return { id: u.id, email: u.email, name: u.name, role: u.role, workshopId: u.workshopId, workshopName: u.workshopName, personId: u.personId ?? null }
}

export function configurePassport(db: Db) {
  const p = new passport.Passport()
  p.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, async (email, password, done) => {
      try {
        const [u] = await db.select().from(users).where(eq(users.email, email.trim().toLowerCase()))
        const ok = await verify(u?.passwordHash ?? DUMMY_HASH, password).catch(() => false)
        if (!u || !ok) return done(null, false, { message: 'The e-mail or password is not right.' })
        if (!u.active) return done(null, false, { message: 'This account has been switched off; ask the workshop owner.' })
        return done(null, (await loadSessionUser(db, u.id)) ?? false)
      } catch (err) {
        return done(err)
      }
    }),
  )
  p.serializeUser((user, done) => done(null, (user as SessionUser).id))
  p.deserializeUser(async (req: Request, id: number, done: (err: unknown, user?: SessionUser | false) => void) => {
    try {
      const user = await cachedSessionUser(db, id)
      const station = (req.session as Partial<SessionData> | undefined)?.station
      done(null, (user && station ? stationUser(user, station) : user) ?? false)
    } catch (err) {
      done(err)
    }
  })
  return p
}

/**
 * How long after its last extension a session's expiry is moved forward again: a twentieth of its idle window, at most
 * ten minutes. Until then requests leave the session row alone (on a durable database a committed write on every
 * request cost a third or more of the board's throughput). So an idle session is signed out after its window minus at
 * most one step, and one that is used at least once per window minus one step is never signed out.
 */
export function sessionExtendStepMs(idleWindowMs: number): number {
  return Math.min(idleWindowMs / 20, 10 * 60_000)
}

/** True when less than the idle window minus one step is left before the session expires. */
export function sessionExtensionDue(cookie: { expires?: Date | null; originalMaxAge?: number | null }, now = Date.now()): boolean {
  const window = cookie.originalMaxAge
  if (!(cookie.expires instanceof Date) || !window || window <= 0) return false
  return cookie.expires.getTime() - now < window - sessionExtendStepMs(window)
}

declare module 'express-session' {
  interface SessionData {
    extendedAt?: number
  }
}

/** The session table's store; saving a session that was read from the table updates its row and never brings back a row deleted meanwhile (signed out). */
export function createSessionStore(pool: pg.Pool, config: Config) {
  const PgStore = connectPgSimple(session)
  const loaded = new WeakSet<object>()
  class SessionStore extends PgStore {
    override createSession(req: Request, data: SessionData) {
      const s = super.createSession(req, data)
      loaded.add(s)
      return s
    }
    override set(sid: string, sess: SessionData, callback?: (err?: unknown) => void) {
      if (!loaded.has(sess)) return super.set(sid, sess, callback)
      const expires = sess.cookie.expires ? new Date(sess.cookie.expires).getTime() : Date.now() + config.SESSION_IDLE_MINUTES * 60_000
      pool.query('update user_sessions set sess = $1, expire = to_timestamp($2) where sid = $3', [sess, Math.ceil(expires / 1000), sid]).then(
        () => callback?.(),
        (err: unknown) => callback?.(err),
      )
    }
  }
  // express-session asks the store to touch every unchanged session after each request; that write is left out
  // (disableTouch) and the expiry moves only when due, as a save of the session (createSessionMiddleware).
  return new SessionStore({ pool, tableName: 'user_sessions', createTableIfMissing: true, pruneSessionInterval: 15 * 60, disableTouch: true })
}

export function createSessionMiddleware(pool: pg.Pool, config: Config): RequestHandler {
  const sessions = session({
    store: createSessionStore(pool, config),
    name: 'millgrain.sid',
    secret: config.SESSION_SECRET,
    resave: false,
    saveUninitialized: false,
    // The cookie is sent again only with a changed session, so with every extension (which changes extendedAt).
    rolling: false,
    // Secure when the request came over HTTPS (the server's own TLS, or a TLS proxy on loopback); plain http on loopback stays as it was.
    cookie: { httpOnly: true, sameSite: 'lax', secure: 'auto', maxAge: config.SESSION_IDLE_MINUTES * 60_000 },
  })
  return (req, res, next) => {
    sessions(req, res, (err?: unknown) => {
      if (err) return next(err)
      // Changing the session makes express-session reset its expiry to a full window, save it and send the cookie again.
      if (req.session && sessionExtensionDue(req.session.cookie)) req.session.extendedAt = Date.now()
      next()
    })
  }
}

/**
 * A bench station: the tablet a manager or the owner signed in for one bench. It has the bench role and no person of its
 * own; it lasts while the one who set it up may still do so.
 */
export function stationUser(setUpBy: SessionUser, station: { benchId: number; benchName: string }): SessionUser | null {
  if (setUpBy.role !== 'owner' && setUpBy.role !== 'manager') return null
  return { ...setUpBy, role: 'bench', name: `${station.benchName} station`, personId: null, station }
}

export function actorOf(user: SessionUser | undefined): Actor | null {
  if (!user) return null
  return { userId: user.id, workshopId: user.workshopId, role: user.role, personId: user.personId, name: user.name, station: user.station ?? null }
}

/** Deny by default: a route that does not list the user's role answers 403. */
export function authorize(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === 'public') return next()
    const actor = actorOf(req.user as SessionUser | undefined)
    if (!actor) return next(new AppError({ code: 'unauthenticated', message: 'Please sign in first.' }))
    if (!access.includes(actor.role)) return next(new AppError({ code: 'forbidden', message: `The ${actor.role} role may not do this.` }))
    next()
  }
}
