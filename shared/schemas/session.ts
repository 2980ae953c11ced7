// Sign-in and the signed-in user as the client sees them.
import { z } from 'zod'
import { ROLES } from '../domain/roles'

export const signIn = z.object({
  email: z.string({ error: 'is required' }).trim().toLowerCase().email('must be an e-mail address').max(200),
  password: z.string({ error: 'is required' }).min(1, 'is required').max(200),
})
export type SignIn = z.infer<typeof signIn>

export const sessionUser = z.object({
  id: z.number(),
  email: z.string(),
  name: z.string(),
  role: z.enum(ROLES),
  workshopId: z.number(),
  workshopName: z.string(),
  personId: z.number().nullable(),
  /** Set when this is a bench station tablet (signed in for one bench; people act with their PIN). */
  station: z.object({ benchId: z.number(), benchName: z.string() }).nullable().optional(),
})
export type SessionUser = z.infer<typeof sessionUser>
export const sessionInfo = z.object({ user: sessionUser.nullable(), csrfToken: z.string() })
export type SessionInfo = z.infer<typeof sessionInfo>
/** The liveness answer: the server runs and its database answered. */
export const health = z.object({ ok: z.literal(true) })
/** Signed out: the session is gone on the server. */
export const signedOut = z.object({ ok: z.literal(true) })
