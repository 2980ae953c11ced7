// What each role sees in the navigation, and where each role lands after signing in.
import type { Role } from '@shared/domain/roles'

export type NavIcon =
  | 'plan'
  | 'orders'
  | 'promise'
  | 'customers'
  | 'benches'
  | 'people'
  | 'calendar'
  | 'routings'
  | 'queue'
  | 'insights'
  | 'team'
  | 'settings'
  | 'outbox'
  | 'quotes'
  | 'money'
  | 'metal'

export interface NavItem {
  to: string
  label: string
  icon: NavIcon
  roles: Role[]
  /** Label for a role that only reads here. */ readOnlyFor?: Role[]
}
export interface NavSection {
  title: string
  items: NavItem[]
}

export const NAV: NavSection[] = [
  {
    title: 'Production',
    items: [
      { to: '/plan', label: 'Plan board', icon: 'plan', roles: ['owner', 'manager', 'sales'], readOnlyFor: ['sales'] },
      { to: '/bench', label: 'My bench queue', icon: 'queue', roles: ['owner', 'bench'] },
      { to: '/orders', label: 'Orders', icon: 'orders', roles: ['owner', 'manager', 'sales'] },
      { to: '/promise', label: 'Promise check', icon: 'promise', roles: ['owner', 'manager', 'sales'] },
    ],
  },
  {
    title: 'Clients',
    items: [
      { to: '/customers', label: 'Customers', icon: 'customers', roles: ['owner', 'manager', 'sales'] },
      { to: '/quotes', label: 'Quotes', icon: 'quotes', roles: ['owner', 'manager', 'sales'] },
      { to: '/outbox', label: 'Sent e-mail', icon: 'outbox', roles: ['owner', 'manager', 'sales'] },
    ],
  },
  {
    title: 'Workshop',
    items: [
      { to: '/benches', label: 'Benches', icon: 'benches', roles: ['owner', 'manager'] },
      { to: '/people', label: 'People & skills', icon: 'people', roles: ['owner', 'manager'] },
      { to: '/calendar', label: 'Calendar', icon: 'calendar', roles: ['owner', 'manager'] },
      { to: '/metal', label: 'Metal', icon: 'metal', roles: ['owner', 'manager'] },
      { to: '/routings', label: 'Routings', icon: 'routings', roles: ['owner', 'manager'] },
    ],
  },
  {
    title: 'Owner’s desk',
    items: [
      { to: '/insights', label: 'Insights', icon: 'insights', roles: ['owner'] },
      { to: '/money', label: 'Money', icon: 'money', roles: ['owner'] },
      { to: '/team', label: 'Team access', icon: 'team', roles: ['owner'] },
      { to: '/settings', label: 'Workshop settings', icon: 'settings', roles: ['owner'] },
    ],
  },
]

/** Navigation for one role: sections with at least one item it may open. */
export function navFor(role: Role): NavSection[] {
  return NAV.map((s) => ({ ...s, items: s.items.filter((i) => i.roles.includes(role)) })).filter((s) => s.items.length > 0)
}

/** Where each role starts its day. */
export const ROLE_HOME: Record<Role, string> = {
  owner: '/orders',
  manager: '/plan',
  bench: '/bench',
  sales: '/orders',
}
