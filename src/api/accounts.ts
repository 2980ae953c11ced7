// Accounts API: invitations (owner), one-time links, reset requests, sign out everywhere, bench stations and PINs.
import type { Invitation, InvitationInput, LinkInfo, PinSession, StationPerson } from '@shared/schemas/account'
import { sessionInfo, type SessionInfo } from '@shared/schemas/session'
import { api, setBenchPersonToken, setCsrfToken } from './client'

export type SentInvitation = Invitation & { mail: { status: string; error: string | null } }

export const listInvitations = () => api.get<Invitation[]>('/invitations')
export const invite = (body: InvitationInput) => api.post<SentInvitation>('/invitations', body)
export const resendInvitation = (id: number) => api.post<SentInvitation>(`/invitations/${id}/resend`)
export const withdrawInvitation = (id: number) => api.delete<void>(`/invitations/${id}`)

export const linkInfo = (token: string) => api.get<LinkInfo>(`/account-links/${encodeURIComponent(token)}`)
export async function useLink(token: string, password: string): Promise<SessionInfo> {
  const info = await api.post(`/account-links/${encodeURIComponent(token)}`, { password }, { parse: (d) => sessionInfo.parse(d) })
  setCsrfToken(info.csrfToken)
  return info
}
export const requestReset = (email: string) => api.post<{ ok: true; message: string }>('/password-reset', { email })
export async function signOutEverywhere(): Promise<void> {
  await api.delete('/session/everywhere')
  setCsrfToken(null)
}

export const setMyPin = (pin: string) => api.put<{ personId: number; hasPin: boolean }>('/me/pin', { pin })
export const setPersonPin = (personId: number, pin: string) => api.put<{ personId: number; hasPin: boolean }>(`/people/${personId}/pin`, { pin })

export async function startStation(benchId: number): Promise<SessionInfo> {
  const info = await api.post('/bench-station', { benchId }, { parse: (d) => sessionInfo.parse(d) })
  setCsrfToken(info.csrfToken)
  return info
}
export const stationPeople = () => api.get<StationPerson[]>('/bench-station/people')
export async function enterPin(personId: number, pin: string): Promise<PinSession> {
  const s = await api.post<PinSession>('/bench-station/pin', { personId, pin })
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
