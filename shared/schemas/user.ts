// Users who sign in (managed by the owner).
import { z } from 'zod'
import { ROLES } from '../domain/roles'
import { name, version } from './common'

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
export interface User {
  id: number
  email: string
  name: string
  role: (typeof ROLES)[number]
  active: boolean
  personId: number | null
  version: number
  createdAt: string
}
