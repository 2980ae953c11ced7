// Roles of the people who sign in, and what each is for.
export const ROLES = ['owner', 'manager', 'bench', 'sales'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABELS: Record<Role, string> = {
  owner: 'Owner',
  manager: 'Manager',
  bench: 'Bench',
  sales: 'Sales',
}

export const STAFF: Role[] = ['owner', 'manager']
export const EVERYONE: Role[] = [...ROLES]
