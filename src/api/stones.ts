// Stones API: a job bag's stone list, counts to and from the setter, corrections, a customer's stones handed back.
import {
  jobBagStones,
  type StoneCheckBackInput,
  type StoneCorrectionInput,
  type StoneLineInput,
  type StoneLineUpdate,
  type StoneMovementInput,
} from '@shared/schemas/stone'
import { api } from './client'

export const getStones = (jobBagId: number) => api.get(`/job-bags/${jobBagId}/stones`, { schema: jobBagStones })
export const addStoneLine = (jobBagId: number, body: StoneLineInput) => api.post(`/job-bags/${jobBagId}/stones`, body, { schema: jobBagStones })
export const updateStoneLine = (lineId: number, body: StoneLineUpdate) => api.patch(`/stones/${lineId}`, body, { schema: jobBagStones })
export const removeStoneLine = (lineId: number, version: number) => api.delete(`/stones/${lineId}?version=${version}`, { schema: jobBagStones })
export const countStones = (lineId: number, body: StoneMovementInput) => api.post(`/stones/${lineId}/movements`, body, { schema: jobBagStones })
export const correctStoneCount = (movementId: number, body: StoneCorrectionInput) =>
  api.post(`/stone-movements/${movementId}/corrections`, body, { schema: jobBagStones })
export const handBackStones = (lineId: number, body: StoneCheckBackInput) => api.post(`/stones/${lineId}/check-back`, body, { schema: jobBagStones })
/** A fresh id per request, so a resent request is recorded once. */
export const newClientId = () => (globalThis.crypto?.randomUUID?.() ?? `${Date.now()}-${Math.random().toString(36).slice(2)}`).replace(/[^A-Za-z0-9_-]/g, '')
