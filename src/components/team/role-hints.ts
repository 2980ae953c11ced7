// One line per role saying what it may do, for the team access screens.
import type { Role } from '@shared/domain/roles'

export const ROLE_HINTS: Record<Role, string> = {
  owner: 'Everything, including workshop settings, team access and insights.',
  manager: 'Plans the work; keeps orders, benches, people, calendar and routings up to date.',
  bench: 'Sees their own queue on the bench tablet and records time.',
  sales: 'Customers, orders and promise dates; sees the plan without changing it.',
}
