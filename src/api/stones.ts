// Stones API: a job bag's stone list, counts to and from the setter, corrections, a customer's stones handed back.
import type { JobBagStones, StoneCheckBackInput, StoneCorrectionInput, StoneLineInput, StoneLineUpdate, StoneMovementInput } from '@shared/schemas/stone'
import { api } from './client'

export const getStones = (jobBagId: number) => api.get<JobBagStones>(`/job-bags/${jobBagId}/stones`)
export const addStoneLine = (jobBagId: number, body: StoneLineInput) => api.post<JobBagStones>(`/job-bags/${jobBagId}/stones`, body)
export const updateStoneLine = (lineId: number, body: StoneLineUpdate) => api.patch<JobBagStones>(`/stones/${lineId}`, body)
export const removeStoneLine = (lineId: number, version: number) => api.delete<JobBagStones>(`/stones/${lineId}?version=${version}`)
export const countStones = (lineId: number, body: StoneMovementInput) => api.post<JobBagStones>(`/stones/${lineId}/movements`, body)
export const correctStoneCount = (movementId: number, body: StoneCorrectionInput) => api.post<JobBagStones>(`/stone-movements/${movementId}/corrections`, body)
export const handBackStones = (lineId: number, body: StoneCheckBackInput) => api.post<JobBagStones>(`/stones/${lineId}/check-back`, body)
/** A fresh id per request, so a resent request is recorded once. */
export const newClientId = () => (globalThis.crypto?.randomUUID?.() ?? `${Date.now()}-${Math.random().toString(36).slice(2)}`).replace(/[^A-Za-z0-9_-]/g, '')
