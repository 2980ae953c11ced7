// Accounts API: invitations (owner), one-time links, reset requests, sign out everywhere, bench stations and PINs.
import { z } from 'zod'
import {
  invitation,
  linkInfo as linkInfoSchema,
  pinSession,
  pinSet,
  resetRequested,
  sentInvitation,
  signedOutEverywhere,
  stationPerson,
  type InvitationInput,
  type PinSession,
} from '@shared/schemas/account'
import { sessionInfo, type SessionInfo } from '@shared/schemas/session'
import { api, setBenchPersonToken, setCsrfToken } from './client'

export type { SentInvitation } from '@shared/schemas/account'

export const listInvitations = () => api.get('/invitations', { schema: z.array(invitation) })
export const invite = (body: InvitationInput) => api.post('/invitations', body, { schema: sentInvitation })
export const resendInvitation = (id: number) => api.post(`/invitations/${id}/resend`, undefined, { schema: sentInvitation })
export const withdrawInvitation = (id: number) => api.delete<void>(`/invitations/${id}`)

export const linkInfo = (token: string) => api.get(`/account-links/${encodeURIComponent(token)}`, { schema: linkInfoSchema })
export async function useLink(token: string, password: string): Promise<SessionInfo> {
  const info = await api.post(`/account-links/${encodeURIComponent(token)}`, { password }, { parse: (d) => sessionInfo.parse(d) })
  setCsrfToken(info.csrfToken)
  return info
}
export const requestReset = (email: string) => api.post('/password-reset', { email }, { schema: resetRequested })
export async function signOutEverywhere(): Promise<void> {
  await api.delete('/session/everywhere', { schema: signedOutEverywhere })
  setCsrfToken(null)
}

export const setMyPin = (pin: string) => api.put('/me/pin', { pin }, { schema: pinSet })
export const setPersonPin = (personId: number, pin: string) => api.put(`/people/${personId}/pin`, { pin }, { schema: pinSet })

export async function startStation(benchId: number): Promise<SessionInfo> {
  const info = await api.post('/bench-station', { benchId }, { parse: (d) => sessionInfo.parse(d) })
  setCsrfToken(info.csrfToken)
  return info
}
export const stationPeople = () => api.get('/bench-station/people', { schema: z.array(stationPerson) })
export async function enterPin(personId: number, pin: string): Promise<PinSession> {
  const s = await api.post('/bench-station/pin', { personId, pin }, { schema: pinSession })
  setBenchPersonToken(s.token)
  return s
}
/** Forgets the PIN token here only (the server ended it with the action). */
export function forgetPin() {
  setBenchPersonToken(null)
}
export async function endPin(): Promise<void> {
  setBenchPersonToken(null)
  await api.delete('/bench-station/pin').catch(() => undefined)
}
