// Users who sign in (managed by the owner).
import { z } from 'zod'
import { ROLES } from '../domain/roles'
import { name, version, wireInt } from './common'

const email = z.string({ error: 'is required' }).trim().toLowerCase().email('must be an e-mail address').max(200)
const password = z.string().min(10, 'must be at least 10 characters').max(200, 'must be at most 200 characters')

export const userCreate = z.object({ email, name, role: z.enum(ROLES, { error: 'must be owner, manager, bench or sales' }), password })
export const userUpdate = z.object({
  name: name.optional(),
  role: z.enum(ROLES, { error: 'must be owner, manager, bench or sales' }).optional(),
  active: z.boolean().optional(),
  password: password.optional(),
  version,
})
export type UserCreate = z.infer<typeof userCreate>
export type UserUpdate = z.infer<typeof userUpdate>

// ---- Answers ----

export const user = z.object({
  id: wireInt,
  email: z.string(),
  name: z.string(),
  role: z.enum(ROLES),
  active: z.boolean(),
  personId: wireInt.nullable(),
  version: wireInt,
  createdAt: z.string(),
})
export type User = z.infer<typeof user>
