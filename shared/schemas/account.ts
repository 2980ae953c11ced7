// Accounts that look after themselves: invitations, one-time links (set a password), reset requests and bench PINs.
import { z } from 'zod'
import { ROLES } from '../domain/roles'
import { id, name } from './common'
import { userCreate } from './user'

const email = z.string({ error: 'is required' }).trim().toLowerCase().email('must be an e-mail address').max(200)

export const invitationInput = z.object({
  email,
  name,
  role: z.enum(ROLES, { error: 'must be owner, manager, bench or sales' }),
  /** The person at a bench this account stands for (optional). */
  personId: id.nullable().optional(),
})
export type InvitationInput = z.infer<typeof invitationInput>

/** The password a one-time link sets: the same rules as a password the owner sets. */
export const linkPassword = z.object({ password: userCreate.shape.password })
export const resetRequest = z.object({ email })
/** A one-time link's token as it travels in the URL (43 characters of base64url for 32 random bytes). */
export const linkToken = z.object({ token: z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, 'is not a link token') })

export const pin = z.string({ error: 'is required' }).regex(/^\d{4,6}$/, 'must be 4 to 6 digits')
export const pinInput = z.object({ pin })
export const pinCheck = z.object({ personId: id, pin })
export const stationInput = z.object({ benchId: id })

export interface Invitation {
  id: number
  email: string
  name: string
  role: (typeof ROLES)[number]
  personId: number | null
  personName: string | null
  createdAt: string
  expiresAt: string
  expired: boolean
  invitedBy: string | null
}
export interface LinkInfo {
  kind: 'invite' | 'reset'
  email: string
  name: string
  workshopName: string
  expiresAt: string
}
export interface StationPerson {
  id: number
  name: string
  hasPin: boolean
}
export interface PinSession {
  token: string
  person: { id: number; name: string }
  expiresAt: string
}
