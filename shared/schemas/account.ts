// Accounts that look after themselves: invitations, one-time links (set a password), reset requests and bench PINs.
import { z } from 'zod'
import { ROLES } from '../domain/roles'
import { id, name, wireInt } from './common'
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

// ---- Answers ----

export const invitation = z.object({
  id: wireInt,
  email: z.string(),
  name: z.string(),
  role: z.enum(ROLES),
  personId: wireInt.nullable(),
  personName: z.string().nullable(),
  createdAt: z.string(),
  expiresAt: z.string(),
  expired: z.boolean(),
  invitedBy: z.string().nullable(),
})
export type Invitation = z.infer<typeof invitation>
/** An invitation just written or sent again, with how its e-mail went (queued, sent or failed, with the mail server's words). */
export const sentInvitation = invitation.extend({ mail: z.object({ status: z.string(), error: z.string().nullable() }) })
export type SentInvitation = z.infer<typeof sentInvitation>
export const linkInfo = z.object({
  kind: z.enum(['invite', 'reset']),
  email: z.string(),
  name: z.string(),
  workshopName: z.string(),
  expiresAt: z.string(),
})
export type LinkInfo = z.infer<typeof linkInfo>
/** The answer to a reset request: the same words whether or not the address has an account. */
export const resetRequested = z.object({ ok: z.literal(true), message: z.string() })
/** Signed out everywhere: how many sessions ended. */
export const signedOutEverywhere = z.object({ ok: z.literal(true), ended: wireInt })
export const pinSet = z.object({ personId: wireInt, hasPin: z.boolean() })
export type PinSet = z.infer<typeof pinSet>
export const stationPerson = z.object({ id: wireInt, name: z.string(), hasPin: z.boolean() })
export type StationPerson = z.infer<typeof stationPerson>
export const pinSession = z.object({ token: z.string(), person: z.object({ id: wireInt, name: z.string() }), expiresAt: z.string() })
export type PinSession = z.infer<typeof pinSession>
