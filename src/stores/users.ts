// Team access (owner): who may sign in, with which role.
import { defineStore } from 'pinia'
import type { User, UserCreate, UserUpdate } from '@shared/schemas/user'
import * as usersApi from '@/api/users'
import { useRecordList } from '@/composables/use-record-list'

export const useUsersStore = defineStore('users', () => {
  /** All users of the workshop. */
  const { items, loaded, loading, error, load, put } = useRecordList<User>(usersApi.listUsers)
  const create = async (input: UserCreate) => put(await usersApi.createUser(input))
  const update = async (id: number, input: UserUpdate) => put(await usersApi.updateUser(id, input))

  return { items, loaded, loading, error, load, create, update }
})
