// Team access (owner): who may sign in, with which role.
import { defineStore } from 'pinia'
import { ref } from 'vue'
import type { User, UserCreate, UserUpdate } from '@shared/schemas/user'
import * as usersApi from '@/api/users'
import { useLoading } from '@/composables/use-loading'

export const useUsersStore = defineStore('users', () => {
  /** All users of the workshop. */
  const items = ref<User[]>([])
  const loaded = ref(false)
  const { loading, error, track } = useLoading()

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(usersApi.listUsers)
    loaded.value = true
  }
  function put(u: User) {
    const i = items.value.findIndex((x) => x.id === u.id)
    if (i >= 0) items.value.splice(i, 1, u)
    else items.value.push(u)
    return u
  }
  const create = async (input: UserCreate) => put(await usersApi.createUser(input))
  const update = async (id: number, input: UserUpdate) => put(await usersApi.updateUser(id, input))

  return { items, loaded, loading, error, load, create, update }
})
