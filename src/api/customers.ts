// Customers API: paged search on the server.
import type { Page } from '@shared/schemas/common'
import type { Customer, CustomerInput } from '@shared/schemas/customer'
import { api } from './client'

export interface ListParams { q?: string; page?: number; pageSize?: number; sort?: string; order?: 'asc' | 'desc' }

export const listCustomers = (p: ListParams = {}) => api.get<Page<Customer>>('/customers', { ...p })
export const getCustomer = (id: number) => api.get<Customer>(`/customers/${id}`)
export const createCustomer = (body: CustomerInput) => api.post<Customer>('/customers', body)
export const updateCustomer = (id: number, body: Partial<CustomerInput> & { version: number }) => api.patch<Customer>(`/customers/${id}`, body)
