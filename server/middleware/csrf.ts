// CSRF protection for cookie-authenticated writes: a per-session token sent back in a header (synchronizer token).
import { randomBytes, timingSafeEqual } from 'node:crypto'
import type { Request, RequestHandler } from 'express'
import { AppError } from '../errors/app-error'

declare module 'express-session' {
  interface SessionData {
    csrfToken?: string
  }
}

export function csrfToken(req: Request): string {
  if (!req.session.csrfToken) req.session.csrfToken = randomBytes(24).toString('base64url')
  return req.session.csrfToken
}

export const requireCsrf: RequestHandler = (req, _res, next) => {
  if (req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return next()
  const sent = req.get('x-csrf-token') ?? ''
  const want = req.session?.csrfToken ?? ''
  const ok = want.length > 0 && sent.length === want.length && timingSafeEqual(Buffer.from(sent), Buffer.from(want))
  if (!ok)
    return next(
      new AppError({
        code: 'forbidden',
        message: 'The page is out of date (security token missing or expired); reload and try again.',
        details: { reason: 'csrf' },
      }),
    )
  next()
}
