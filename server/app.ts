// createApp: the Express application (security, sessions, API routes, static client) without listening.
import { existsSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { randomUUID } from 'node:crypto'
import express, { type RequestHandler } from 'express'
import rateLimit from 'express-rate-limit'
import helmet from 'helmet'
import type pg from 'pg'
import type { Config } from './config'
import type { Db } from './db/client'
import { AppError, invalid } from './errors/app-error'
import { errorHandler } from './errors/handler'
import { actorOf, authorize, configurePassport, createSessionMiddleware, useSessionUserCache } from './middleware/auth'
import { Cache } from './lib/cache'
import { requireCsrf } from './middleware/csrf'
import { endPinAfterWrite, resolveBenchPerson } from './middleware/bench-person'
import { checkAnswer, type Deps, type RouteSpec } from './lib/route'
import type { Jobs } from './jobs/queue'
import { Realtime } from './realtime/hub'
import { realtimeOrigin } from './realtime/origin'
import { allRoutes } from './routes/index'
import { UNSTORABLE_REASON, unstorableText } from './lib/text-guard'
import { createMailer, type Mailer } from './mail/transport'
import type { SessionUser } from '../shared/schemas/session'
import { createPayProvider } from './services/pay-provider'
import { handleWebhook } from './services/payments'
import { ownAppUrl } from './lib/public-url'
import { CA_PATH, caCertificateHandler } from './lib/tls'

export interface AppDeps {
  db: Db
  pool: pg.Pool
  config: Config
  realtime?: Realtime
  mailer?: Mailer
  /** The job queue; the caller starts it with the returned deps. */ jobs?: Jobs<Deps>
}

export function createApp({ db, pool, config, realtime = new Realtime(), mailer = createMailer(config), jobs }: AppDeps) {
  const app = express()
  app.disable('x-powered-by')
  app.set('trust proxy', 'loopback')
  app.use((req, res, next) => {
    ;(req as { id?: string }).id = randomUUID()
    next()
  })
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          styleSrc: ["'self'", "'unsafe-inline'"],
          connectSrc: ["'self'", 'ws:', 'wss:'],
          // The ticket scanner (qr-scanner) decodes in a worker it builds from a blob: URL; nothing else may start workers.
          workerSrc: ["'self'", 'blob:'],
          upgradeInsecureRequests: null,
        },
      },
      // Served over plain http on loopback by default, or with a self-signed certificate on the workshop network (LAN):
      // HSTS belongs to a TLS proxy with a real certificate in front.
      strictTransportSecurity: false,
    }),
  )
  const sessionMiddleware = createSessionMiddleware(pool, config)
  const passport = configurePassport(db)
  // Change events are numbered in PostgreSQL and the read cache is shared by board, promise checks and signed-in users.
  realtime.useDatabase(pool)
  const cache = new Cache(realtime)
  useSessionUserCache(db, cache)
  const deps: Deps = {
    db,
    realtime,
    cache,
    passport,
    mailer,
    uploadDir: resolve(config.UPLOAD_DIR),
    uploadMaxBytes: config.UPLOAD_MAX_BYTES,
    listenHost: config.HOST,
    pay: createPayProvider(config),
    appUrl: ownAppUrl(config),
    accounts: {
      inviteHours: config.INVITE_LINK_HOURS,
      resetMinutes: config.RESET_LINK_MINUTES,
      pinSeconds: config.BENCH_PIN_SECONDS,
      benchSessionDays: config.BENCH_SESSION_DAYS,
    },
    checkAnswers: config.NODE_ENV !== 'production',
  }
  if (jobs) deps.jobs = jobs

  const api = express.Router()
  api.use(express.json({ limit: '1mb' }))
  api.use(sessionMiddleware)
  api.use(passport.session())
  api.use(resolveBenchPerson)
  // The tab that sent a write is named in the events it causes, so that tab can skip its own echo.
  api.use(realtimeOrigin)
  // Failed sign-ins are limited per address and per account; a sign-in that succeeds does not count (tablets behind one router sign in all day).
  const failedSignIns = (what: string, keyGenerator?: (req: express.Request) => string) =>
    rateLimit({
      windowMs: 15 * 60_000,
      limit: config.LOGIN_ATTEMPTS_PER_15_MIN,
      skipSuccessfulRequests: true,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      ...(keyGenerator ? { keyGenerator } : {}),
      handler: (_req, _res, next) => next(new AppError({ code: 'rate-limited', message: `Too many failed sign-ins ${what}; wait 15 minutes and try again.` })),
    })
  const accountKey = (req: express.Request) => {
    const email = (req.body as { email?: unknown } | undefined)?.email
    return `account:${typeof email === 'string' ? email.trim().toLowerCase() : ''}`
  }
  api.post('/session', failedSignIns('from this address'), failedSignIns('for this account', accountKey))
  // Invitations, reset requests, one-time links and PIN checks are limited per address (reset requests also per address asked for).
  const accountRequests = (what: string, o: { keyGenerator?: (req: express.Request) => string; failedOnly?: boolean } = {}) =>
    rateLimit({
      windowMs: 15 * 60_000,
      limit: config.ACCOUNT_REQUESTS_PER_15_MIN,
      skipSuccessfulRequests: o.failedOnly ?? false,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      ...(o.keyGenerator ? { keyGenerator: o.keyGenerator } : {}),
      handler: (_req, _res, next) => next(new AppError({ code: 'rate-limited', message: `Too many ${what}; wait 15 minutes and try again.` })),
    })
  api.post(['/invitations', '/invitations/:id/resend'], accountRequests('invitations sent from here'))
  api.post('/password-reset', accountRequests('reset requests from here'), accountRequests('reset requests for this address', { keyGenerator: accountKey }))
  api.use('/account-links', accountRequests('tries of one-time links from here'))
  api.post('/bench-station/pin', accountRequests('wrong PINs on this tablet', { failedOnly: true, keyGenerator: (req) => `station:${req.sessionID}` }))

  for (const spec of allRoutes) register(api, spec, deps)
  // The provider's signed webhook: no session and no CSRF token, the raw body is what the signature covers.
  app.post('/api/payments/webhook', express.raw({ type: () => true, limit: '1mb' }), (req, res, next) => {
    handleWebhook(deps, Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0), req.get('stripe-signature')).then(async (r) => {
      await deps.realtime.flush()
      res.json(r)
    }, next)
  })
  api.use((req, _res, next) => next(new AppError({ code: 'not-found', message: `No such API route: ${req.method} ${req.baseUrl}${req.path}` })))
  app.use('/api', api)

  // Over HTTPS with the workshop's own CA, tablets download its certificate here to trust it (see README).
  if (config.TLS) app.get(CA_PATH, caCertificateHandler(config.TLS_DIR))

  const clientDir = config.CLIENT_DIR ? resolve(config.CLIENT_DIR) : null
  if (clientDir && existsSync(join(clientDir, 'index.html'))) {
    app.use(express.static(clientDir, { index: false, maxAge: '1h' }))
    // History-mode routing: any other GET gets the app shell.
    app.get(/^(?!\/api\/|\/socket\.io\/).*/, (_req, res) => res.sendFile(join(clientDir, 'index.html')))
  }
  app.use(errorHandler)
  return { app, sessionMiddleware, passport, realtime, cache, deps }
}

/** Mounts one route: role and CSRF checks, input parsing, the handler, its events flushed, its answer (checked against `response` in development and tests). */
export function register(router: express.Router, spec: RouteSpec, deps: Deps) {
  const handler: RequestHandler = async (req, res, next) => {
    try {
      const unstorable = unstorableText(req.params) ?? unstorableText(req.query) ?? unstorableText(req.body)
      if (unstorable) throw invalid(unstorable, UNSTORABLE_REASON)
      const params = spec.params ? spec.params.parse(req.params) : req.params
      const query = spec.query ? spec.query.parse(req.query) : req.query
      const body = spec.body ? spec.body.parse(req.body ?? {}) : req.body
      const actor = actorOf(req.user as SessionUser | undefined)
      const result = await spec.handler({ req, res, actor: actor!, body, query, params, deps })
      // The change events of this request are numbered and sent before it answers, so whoever reads next (on any instance) sees them.
      await deps.realtime.flush()
      if (deps.checkAnswers) checkAnswer(`${spec.method.toUpperCase()} ${spec.path}`, spec.response, result)
      endPinAfterWrite(req)
      if (result === undefined) {
        if (!res.headersSent) res.status(204).end()
        return
      }
      res.status(spec.status ?? 200).json(result)
    } catch (err) {
      next(err)
    }
  }
  // Who you are before the CSRF token: a write without a session is 401 (sign in), not 403 (reload).
  router[spec.method](spec.path, authorize(spec.roles), requireCsrf, handler)
}
