// Route declarations: every API route names the roles it allows (deny by default) and the schemas of its input.
import type { Request, Response } from 'express'
import type { ZodType } from 'zod'
import type { Role } from '../../shared/domain/roles'
import type { Db } from '../db/client'
import type { Realtime } from '../realtime/hub'
import type { Mailer } from '../mail/transport'
import type { PayProvider } from '../services/pay-provider'
import type { Cache } from './cache'

export interface Actor {
  userId: number
  workshopId: number
  role: Role
  personId: number | null
  name: string
  /** A bench station tablet the person acts at (after their PIN). */ station?: { benchId: number; benchName: string } | null
}

import type { PassportStatic } from 'passport'
import type { Jobs } from '../jobs/queue'
type Authenticator = InstanceType<PassportStatic['Passport']>

export interface Deps {
  db: Db
  realtime: Realtime
  /** The app's read cache (absent in scripts: everything is loaded). */ cache?: Cache
  passport?: Authenticator
  uploadDir?: string
  uploadMaxBytes?: number
  mailer?: Mailer
  /** The HOST the server listens on (config). */ listenHost?: string
  /** The payment provider (real or the local fake); null when none is configured. */ pay?: PayProvider | null
  /** This server's own address, for the provider's return pages when the workshop has no public address. */ appUrl?: string
  /** Link lifetimes, the bench PIN time and a bench session's days (config). */ accounts?: {
    inviteHours: number
    resetMinutes: number
    pinSeconds: number
    benchSessionDays: number
  }
  /** The job queue (server/jobs); absent in scripts, where the work happens in place. */ jobs?: Jobs<Deps>
  /** Check answers against their routes' response schemas (NODE_ENV development or test; see checkAnswer). */ checkAnswers?: boolean
}

export interface RouteContext<B, Q, P> {
  req: Request
  res: Response
  actor: Actor
  body: B
  query: Q
  params: P
  deps: Deps
}

export type Access = Role[] | 'public'

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- one list holds routes of every input type; each route() call infers its own
export interface RouteSpec<B = any, Q = any, P = any> {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete'
  /** Express path under /api. */
  path: string
  roles: Access
  summary: string
  body?: ZodType<B>
  query?: ZodType<Q>
  params?: ZodType<P>
  /** What the JSON answer may hold (shared/schemas): checked in development and tests, trusted in production (see checkAnswer). */
  response?: ZodType
  /** Status for a successful answer (default 200; 201 for creations). */
  status?: number
  /** Returns the JSON body, or undefined when the handler answered itself (files, PDFs). */
  handler: (ctx: RouteContext<B, Q, P>) => Promise<unknown>
}

/**
 * Checks a handler's answer (in development and tests: `deps.checkAnswers`; production trusts its answers — nothing was
 * measured, the check is simply not needed there) as it goes on the wire (after JSON, so dates are strings) against a response schema.
 * A mismatch is logged with the route and zod's issues and thrown as a plain error, which the error handler answers 500.
 * The answer sent is the handler's own, never the parsed copy, so development and production send the same bytes.
 */
export function checkAnswer(label: string, schema: ZodType | undefined, result: unknown): void {
  if (!schema || result === undefined) return
  const checked = schema.safeParse(JSON.parse(JSON.stringify(result)))
  if (checked.success) return
  const issues = checked.error.issues
    .slice(0, 10)
    .map((i) => `${i.path.join('.') || '(answer)'}: ${i.message}`)
    .join('; ')
  console.error(`[contract] ${label} answered something its response schema does not allow: ${issues}`)
  throw new Error(`The answer of ${label} does not match its response schema`)
}

export function route<B = unknown, Q = unknown, P = unknown>(spec: RouteSpec<B, Q, P>): RouteSpec<B, Q, P> {
  return spec
}
