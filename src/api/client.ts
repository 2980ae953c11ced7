// The one HTTP client of the app: JSON, same-origin cookies, the CSRF token on writes, error bodies as ApiError.
import type { ErrorBody, ErrorCode } from '@shared/errors'
import type { ZodType } from 'zod'
import { CLIENT_ID } from '@/realtime/client-id'

export type ApiErrorCode = ErrorCode | 'network'

/** Every failed API call ends up as this: the HTTP status, the server's code, a readable message and field reasons. */
export class ApiError extends Error {
  readonly status: number
  readonly code: ApiErrorCode
  readonly fields: Record<string, string>
  readonly details?: unknown
  readonly requestId?: string
  constructor(o: { status: number; code: ApiErrorCode; message: string; fields?: Record<string, string>; details?: unknown; requestId?: string }) {
    super(o.message)
    this.name = 'ApiError'
    this.status = o.status
    this.code = o.code
    this.fields = o.fields ?? {}
    this.details = o.details
    this.requestId = o.requestId
  }

  /** True when the server refused a write because the security token was missing or stale. */
  get isCsrf(): boolean {
    return this.status === 403 && (this.details as { reason?: string } | undefined)?.reason === 'csrf'
  }

  static async fromResponse(res: Response): Promise<ApiError> {
    let body: Partial<ErrorBody> | null
    try {
      body = (await res.json()) as Partial<ErrorBody>
    } catch {
      body = null
    }
    return new ApiError({
      status: res.status,
      code: body?.code ?? fallbackCode(res.status),
      message: body?.error ?? `The server answered ${res.status} ${res.statusText}`.trim(),
      fields: body?.fields && typeof body.fields === 'object' ? body.fields : {},
      details: body?.details,
      requestId: body?.requestId,
    })
  }
}

function fallbackCode(status: number): ErrorCode {
  const byStatus: Record<number, ErrorCode> = {
    400: 'validation',
    401: 'unauthenticated',
    403: 'forbidden',
    404: 'not-found',
    409: 'conflict',
    422: 'unprocessable',
    429: 'rate-limited',
    503: 'unavailable',
  }
  return byStatus[status] ?? 'internal'
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE'
export type Query = Record<string, string | number | boolean | null | undefined>

let csrfToken: string | null = null
/** Listeners told when the server says the session is gone (401), so the app can show the sign-in page. */
const unauthenticatedListeners = new Set<() => void>()

export function setCsrfToken(token: string | null) {
  csrfToken = token
}
/** On a bench station: the token of the person whose PIN was entered (memory only), sent with every request. */
let benchPersonToken: string | null = null
export function setBenchPersonToken(token: string | null) {
  benchPersonToken = token
}
export function onUnauthenticated(fn: () => void): () => void {
  unauthenticatedListeners.add(fn)
  return () => unauthenticatedListeners.delete(fn)
}

async function refreshCsrfToken(): Promise<string> {
  const res = await fetch('/api/session', { credentials: 'same-origin', headers: { accept: 'application/json' } })
  if (!res.ok) throw await ApiError.fromResponse(res)
  const body = (await res.json()) as { csrfToken?: string }
  csrfToken = body.csrfToken ?? null
  return csrfToken ?? ''
}

function url(path: string, query?: Query): string {
  const qs = new URLSearchParams()
  for (const [k, v] of Object.entries(query ?? {})) if (v !== undefined && v !== null && v !== '') qs.set(k, String(v))
  const s = qs.toString()
  return `/api${path}${s ? `?${s}` : ''}`
}

async function send(method: Method, path: string, body: unknown, query: Query | undefined, signal?: AbortSignal): Promise<Response> {
  const headers: Record<string, string> = { accept: 'application/json', 'x-client-id': CLIENT_ID }
  if (body !== undefined) headers['content-type'] = 'application/json'
  if (method !== 'GET') headers['x-csrf-token'] = csrfToken ?? (await refreshCsrfToken())
  if (benchPersonToken) headers['x-bench-person'] = benchPersonToken
  try {
    return await fetch(url(path, query), { method, headers, credentials: 'same-origin', body: body === undefined ? undefined : JSON.stringify(body), signal })
  } catch (err) {
    if ((err as Error)?.name === 'AbortError') throw err
    throw new ApiError({ status: 0, code: 'network', message: 'The workshop server cannot be reached; check the connection and try again.' })
  }
}

/** How a call reads its answer: `schema` (shared/schemas) checks it in development and tests; `parse` turns it into T always. */
export interface AnswerOptions<T> {
  schema?: ZodType<T>
  parse?: (data: unknown) => T
}
export interface GetOptions<T> extends AnswerOptions<T> {
  query?: Query
  signal?: AbortSignal
}

/** Answers are checked against their schema in development and tests; production trusts them (the board answer is large). */
const CHECK_ANSWERS = import.meta.env.DEV || import.meta.env.MODE === 'test'

/** The answer itself, after its schema passed it (a mismatch is an ApiError naming the call and the fields). */
export function checked<T>(method: Method, path: string, schema: ZodType<T>, data: unknown): T {
  if (!CHECK_ANSWERS) return data as T
  const r = schema.safeParse(data)
  if (r.success) return data as T
  const issues = r.error.issues.slice(0, 5).map((i) => `${i.path.join('.') || '(answer)'}: ${i.message}`)
  console.error(`[contract] ${method} ${path} answered something its schema does not allow`, r.error.issues)
  throw new ApiError({
    status: 200,
    code: 'internal',
    message: `The server's answer to ${method} ${path} is not what this page expects (${issues.join('; ')})`,
  })
}

/** One API call; a write refused for a stale security token is retried once with a fresh token. */
export async function request<T>(method: Method, path: string, o: { body?: unknown; query?: Query; signal?: AbortSignal } & AnswerOptions<T> = {}): Promise<T> {
  let res = await send(method, path, o.body, o.query, o.signal)
  if (!res.ok) {
    let err = await ApiError.fromResponse(res)
    if (err.isCsrf && method !== 'GET') {
      await refreshCsrfToken()
      res = await send(method, path, o.body, o.query, o.signal)
      if (!res.ok) err = await ApiError.fromResponse(res)
    }
    if (!res.ok) {
      if (err.status === 401 && path !== '/session') unauthenticatedListeners.forEach((fn) => fn())
      throw err
    }
  }
  if (res.status === 204) return undefined as T
  const data: unknown = await res.json()
  if (o.parse) return o.parse(data)
  return o.schema ? checked(method, path, o.schema, data) : (data as T)
}

export const api = {
  get: <T>(path: string, o: GetOptions<T> = {}) => request<T>('GET', path, o),
  post: <T>(path: string, body?: unknown, o: AnswerOptions<T> = {}) => request<T>('POST', path, { body: body ?? {}, ...o }),
  put: <T>(path: string, body?: unknown, o: AnswerOptions<T> = {}) => request<T>('PUT', path, { body: body ?? {}, ...o }),
  patch: <T>(path: string, body?: unknown, o: AnswerOptions<T> = {}) => request<T>('PATCH', path, { body: body ?? {}, ...o }),
  delete: <T>(path: string, o: AnswerOptions<T> = {}) => request<T>('DELETE', path, o),
}
