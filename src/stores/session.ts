// Who is signed in, with their role; sign-in and sign-out.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { Role } from '@shared/domain/roles'
import type { SessionInfo, SessionUser, SignIn } from '@shared/schemas/session'
import * as sessionApi from '@/api/session'
import * as accountsApi from '@/api/accounts'

export const useSessionStore = defineStore('session', () => {
  /** The signed-in user, or null. */
  const user = ref<SessionUser | null>(null)
  /** True once the server has been asked at least once. */
  const loaded = ref(false)
  const loading = ref(false)
  const role = computed<Role | null>(() => user.value?.role ?? null)
  const signedIn = computed(() => user.value !== null)
  let pending: Promise<void> | null = null

  /** Asks the server who is signed in (and gets a CSRF token). */
  async function fetch(): Promise<void> {
    if (pending) return pending
    loading.value = true
    pending = sessionApi
      .fetchSession()
      .then((info) => {
        user.value = info.user
      })
      .finally(() => {
        loaded.value = true
        loading.value = false
        pending = null
      })
    return pending
  }

  /** Loads the session once; later calls return at once. */
  async function ensure(): Promise<void> {
    if (!loaded.value) await fetch().catch(() => undefined)
  }

  /** Signs in; throws ApiError (401 with a clear message) on a wrong e-mail or password. */
  async function signIn(credentials: SignIn): Promise<SessionUser> {
    const info = await sessionApi.signIn(credentials)
    user.value = info.user
    loaded.value = true
    return info.user!
  }

  /** Signs out on the server and forgets the user here. */
  async function signOut(): Promise<void> {
    try {
      await sessionApi.signOut()
    } finally {
      user.value = null
    }
  }

  /** Takes the session the server handed back (a one-time link used, a station started). */
  function adopt(info: SessionInfo): SessionUser | null {
    user.value = info.user
    loaded.value = true
    return info.user
  }

  /** Ends every session of this user, this one too. */
  async function signOutEverywhere(): Promise<void> {
    try {
      await accountsApi.signOutEverywhere()
    } finally {
      user.value = null
    }
  }

  /** Forgets the user without asking the server (the server said 401). */
  function forget() {
    user.value = null
  }

  return { user, role, signedIn, loaded, loading, fetch, ensure, signIn, signOut, signOutEverywhere, adopt, forget }
})
