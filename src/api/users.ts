// Users API (owner only): team access.
import { z } from 'zod'
import { user, type UserCreate, type UserUpdate } from '@shared/schemas/user'
import { api } from './client'

export const listUsers = () => api.get('/users', { schema: z.array(user) })
export const createUser = (body: UserCreate) => api.post('/users', body, { schema: user })
export const updateUser = (id: number, body: UserUpdate) => api.patch(`/users/${id}`, body, { schema: user })
