// Error codes and the shape every API error takes on the wire.
export const ERROR_CODES = [
  'validation', // 400: fields holds field → reason
  'unauthenticated', // 401
  'forbidden', // 403
  'not-found', // 404
  'conflict', // 409: stale version, duplicate, already claimed
  'unprocessable', // 422: well-formed but cannot be done (e.g. cannot be planned)
  'rate-limited', // 429
  'unavailable', // 503: database down
  'internal', // 500
] as const
export type ErrorCode = (typeof ERROR_CODES)[number]

export interface ErrorBody {
  error: string
  code: ErrorCode
  fields?: Record<string, string>
  details?: unknown
  requestId?: string
}
