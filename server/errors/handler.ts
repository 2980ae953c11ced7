// Central error handler: AppError → its status, zod errors → 400 with fields, database down → 503, the rest → 500 logged.
import type { ErrorRequestHandler } from 'express'
import { ZodError } from 'zod'
import type { ErrorBody } from '../../shared/errors'
import { AppError } from './app-error'

export function zodFields(err: ZodError): Record<string, string> {
  const fields: Record<string, string> = {}
  for (const issue of err.issues) {
    const key = issue.path.length ? issue.path.join('.') : '_'
    if (!fields[key]) fields[key] = issue.message
  }
  return fields
}

const DB_DOWN = new Set(['ECONNREFUSED', 'ECONNRESET', '57P01', '57P02', '57P03', '08006', '08001', '08003'])
function isDatabaseDown(err: unknown): boolean {
  const e = err as { code?: string; message?: string; cause?: unknown }
  if (e?.code && DB_DOWN.has(e.code)) return true
  if (typeof e?.message === 'string' && /Connection terminated|timeout exceeded when trying to connect|connect ECONNREFUSED/.test(e.message)) return true
  return e?.cause ? isDatabaseDown(e.cause) : false
}

/** PostgreSQL class 22 (data exception: out of range, malformed, NUL in text…), also when Drizzle wraps it in `cause`: user input, not a server fault. */
function isDataException(err: unknown): boolean {
  const e = err as { code?: unknown; cause?: unknown }
  if (typeof e?.code === 'string' && /^22[0-9A-Z]{3}$/.test(e.code)) return true
  return e?.cause ? isDataException(e.cause) : false
}

export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  const requestId = (req as { id?: string }).id
  // A late error after the answer went out (e.g. the session store failing to save while the database is down):
  // the answer stands and the keep-alive connection stays usable; only an unfinished answer goes to Express's handler.
  if (res.headersSent) {
    if (!res.writableEnded) return _next(err)
    if (!isDatabaseDown(err)) console.error(`[error] ${requestId ?? ''} ${req.method} ${req.originalUrl} after the answer was sent:`, err)
    return
  }
  let status = 500
  let body: ErrorBody
  if (err instanceof AppError) {
    status = err.status
    body = { error: err.message, code: err.code, fields: err.fields, details: err.details }
  } else if (err instanceof ZodError) {
    status = 400
    const fields = zodFields(err)
    body = {
      error: `Please correct: ${Object.entries(fields)
        .map(([k, v]) => `${k} ${v}`)
        .join('; ')}`,
      code: 'validation',
      fields,
    }
  } else if (err?.type === 'entity.parse.failed') {
    status = 400
    body = { error: 'The request body is not valid JSON', code: 'validation', fields: { _: 'is not valid JSON' } }
  } else if (err?.type === 'entity.too.large') {
    status = 413
    body = { error: 'The request body is too large', code: 'validation', fields: { _: 'is too large' } }
  } else if (err instanceof URIError) {
    // The router could not percent-decode a path parameter (e.g. "/orders/%"): the client's URL, not a server fault.
    status = 400
    body = { error: 'The address is not valid URL encoding', code: 'validation', fields: { path: 'is not valid URL encoding' } }
  } else if (err?.code === 'EBADCSRFTOKEN') {
    status = 403
    body = { error: err.message, code: 'forbidden' }
  } else if (isDatabaseDown(err)) {
    status = 503
    body = { error: 'The database is not reachable just now; nothing was saved. Try again in a moment.', code: 'unavailable' }
    res.setHeader('Retry-After', '5')
  } else if (isDataException(err)) {
    status = 400
    body = { error: 'A value is out of range or malformed', code: 'validation', fields: { _: 'is out of range or malformed' } }
  } else {
    console.error(`[error] ${requestId ?? ''} ${req.method} ${req.originalUrl}:`, err)
    body = { error: 'Something went wrong on the server; it has been logged.', code: 'internal' }
  }
  res.status(status).json({ ...body, requestId })
}
