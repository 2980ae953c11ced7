// The role-aware navigation guard: sign-in first, then each route's `meta.roles`.
import type { RouteLocationNormalized, RouteLocationRaw } from 'vue-router'
import type { Role } from '@shared/domain/roles'
import { ROLE_HOME } from './navigation'

declare module 'vue-router' {
  interface RouteMeta {
    /** Roles that may open the route; absent = any signed-in user. */
    roles?: Role[]
    /** Open to anyone, signed in or not. */
    public?: boolean
    /** Only for people who are not signed in (the sign-in page). */
    guestOnly?: boolean
    /** Page title shown in the browser tab. */
    title?: string
    /**
     * Where toasts appear on this screen: 'title-bar' keeps them in the sticky title bar, one at a time, where a screen's own
     * controls — at its top and down the page as it scrolls — must stay free to tap while one shows.
     */
    toasts?: 'top' | 'title-bar'
  }
}

/** Decides one navigation: true to go ahead, or where to go instead. */
export function decide(to: RouteLocationNormalized, role: Role | null): true | RouteLocationRaw {
  if (to.meta.guestOnly) {
    if (!role) return true
    const back = typeof to.query.redirect === 'string' && to.query.redirect.startsWith('/') ? to.query.redirect : ROLE_HOME[role]
    return back
  }
  if (to.meta.public) return true
  if (!role) return { name: 'sign-in', query: to.fullPath !== '/' ? { redirect: to.fullPath } : {} }
  if (to.path === '/') return ROLE_HOME[role]
  const allowed = to.matched.every((r) => !r.meta.roles || r.meta.roles.includes(role))
  if (!allowed) return { name: 'not-allowed', query: { from: to.fullPath } }
  return true
}
