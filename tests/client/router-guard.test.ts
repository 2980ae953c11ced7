// The role-aware router: signed-out users go to sign-in, each role to its start page, and screens not for a role say so.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { createMemoryHistory, createRouter } from 'vue-router'
import type { Role } from '@shared/domain/roles'
import { routes } from '@/router'
import { decide } from '@/router/guards'
import { ROLE_HOME } from '@/router/navigation'
import { useSessionStore } from '@/stores/session'

function signedInAs(role: Role | null) {
  const session = useSessionStore()
  session.user = role ? { id: 1, email: `${role}@example.test`, name: 'Test Person', role, workshopId: 1, workshopName: 'Test Workshop', personId: null } : null
  session.loaded = true
}

function makeRouter() {
  const router = createRouter({ history: createMemoryHistory(), routes })
  router.beforeEach((to) => decide(to, useSessionStore().role))
  return router
}

beforeEach(() => {
  setActivePinia(createPinia())
  vi.stubGlobal(
    'fetch',
    vi.fn(async () => new Response('{}', { status: 200 })),
  )
})

// The first navigation loads the lazy screens (and Element Plus) through the transformer: allow it time.
describe('router guard', { timeout: 60_000 }, () => {
  it('when a bench user opens /settings, then they are sent to the not-allowed page that names where they came from', async () => {
    signedInAs('bench')
    const router = makeRouter()
    await router.push('/settings')
    expect(router.currentRoute.value.name).toBe('not-allowed')
    expect(router.currentRoute.value.query.from).toBe('/settings')
  })

  it('when the owner opens /settings, then the settings screen opens', async () => {
    signedInAs('owner')
    const router = makeRouter()
    await router.push('/settings')
    expect(router.currentRoute.value.name).toBe('settings')
  })

  it('when nobody is signed in, then any screen leads to sign-in with the wanted address kept', async () => {
    signedInAs(null)
    const router = makeRouter()
    await router.push('/customers?q=ann')
    expect(router.currentRoute.value.name).toBe('sign-in')
    expect(router.currentRoute.value.query.redirect).toBe('/customers?q=ann')
  })

  it.each(['owner', 'manager', 'bench', 'sales'] as Role[])('when a %s opens the root, then they land on their start page', async (role) => {
    signedInAs(role)
    const router = makeRouter()
    await router.push('/')
    expect(router.currentRoute.value.path).toBe(ROLE_HOME[role])
  })

  it('when a signed-in user opens the sign-in page, then they go to their start page', async () => {
    signedInAs('sales')
    const router = makeRouter()
    await router.push('/sign-in')
    expect(router.currentRoute.value.path).toBe(ROLE_HOME.sales)
  })

  it('when sales open the routings (kept for staff), then the not-allowed page shows', async () => {
    signedInAs('sales')
    const router = makeRouter()
    await router.push('/routings')
    expect(router.currentRoute.value.name).toBe('not-allowed')
  })
})
