// Users API (owner only): team access.
import type { User, UserCreate, UserUpdate } from '@shared/schemas/user'
import { api } from './client'

export const listUsers = () => api.get<User[]>('/users')
export const createUser = (body: UserCreate) => api.post<User>('/users', body)
export const updateUser = (id: number, body: UserUpdate) => api.patch<User>(`/users/${id}`, body)
