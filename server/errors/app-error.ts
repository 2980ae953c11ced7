// The one error type services throw; the central handler turns it into the wire shape.
import type { ErrorCode } from '../../shared/errors'

const STATUS: Record<ErrorCode, number> = {
  validation: 400,
  unauthenticated: 401,
  forbidden: 403,
  'not-found': 404,
  conflict: 409,
  unprocessable: 422,
  'rate-limited': 429,
  unavailable: 503,
  internal: 500,
}

export class AppError extends Error {
  readonly code: ErrorCode
  readonly status: number
  readonly fields?: Record<string, string>
  readonly details?: unknown
  constructor(o: { code: ErrorCode; message: string; status?: number; fields?: Record<string, string>; details?: unknown }) {
    super(o.message)
    this.code = o.code
    this.status = o.status ?? STATUS[o.code]
    this.fields = o.fields
    this.details = o.details
  }
}

export const notFound = (what: string) => new AppError({ code: 'not-found', message: `${what} not found` })
export const staleVersion = (what: string) =>
  new AppError({ code: 'conflict', message: `${what} was changed by someone else since you opened it; reload to see their change, then edit again` })
export const invalid = (field: string, reason: string) => new AppError({ code: 'validation', message: `${field}: ${reason}`, fields: { [field]: reason } })
