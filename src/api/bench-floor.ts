// Bench API: next for me, my work, and the transitions (each carries a requestId so a replay gets the first answer).
import { benchList, transitionResult } from '@shared/schemas/bench-floor'
import { api } from './client'

export type { BenchList } from '@shared/schemas/bench-floor'
export type BenchAction = 'claim' | 'release' | 'start' | 'pause' | 'resume' | 'finish'
export interface TransitionBody {
  requestId: string
  benchId?: number
  acknowledgeHazards?: boolean
  reason?: string
  note?: string
  personId?: number
}

export const nextForMe = (benchId: number) => api.get('/bench/next', { query: { benchId }, schema: benchList })
export const myWork = () => api.get('/bench/mine', { schema: benchList })
export const transition = (operationId: number, action: BenchAction, body: TransitionBody) =>
  api.post(`/bench/operations/${operationId}/${action}`, body, { schema: transitionResult })

/** A v4 UUID; also on plain-http tablets, where crypto.randomUUID is missing. */
export function newRequestId(): string {
  if (typeof crypto.randomUUID === 'function' && window.isSecureContext) return crypto.randomUUID()
  const b = crypto.getRandomValues(new Uint8Array(16))
  b[6] = (b[6]! & 0x0f) | 0x40
  b[8] = (b[8]! & 0x3f) | 0x80
  const h = [...b].map((x) => x.toString(16).padStart(2, '0')).join('')
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`
}

/** Outside work (casting, hallmarking): the office sends it out and books it back. */
export const sendOut = (operationId: number, note = '') =>
  api.post(`/operations/${operationId}/send-out`, { requestId: newRequestId(), note }, { schema: transitionResult })
export const bookBack = (operationId: number, note = '') =>
  api.post(`/operations/${operationId}/receive`, { requestId: newRequestId(), note }, { schema: transitionResult })
