// Users (owner only): create, change role, switch off; passwords hashed with argon2id, never returned.
import { hash } from '@node-rs/argon2'
import { asc, eq } from 'drizzle-orm'
import type { UserCreate, UserUpdate } from '../../shared/schemas/user'
import type { Db } from '../db/client'
import { people, users } from '../db/schema/index'
import { AppError } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { dropSessionUsers } from '../lib/session-users'
import { isUniqueViolation, updateVersioned } from './versioned'

/** argon2id with the OWASP-recommended minimum (19 MiB, 2 passes). */
export const hashPassword = (password: string) => hash(password, { memoryCost: 19456, timeCost: 2, parallelism: 1 })

const publicFields = {
  id: users.id,
  email: users.email,
  name: users.name,
  role: users.role,
  active: users.active,
  version: users.version,
  createdAt: users.createdAt,
  personId: people.id,
}

export const listUsers = (db: Db, workshopId: number) =>
  db.select(publicFields).from(users).leftJoin(people, eq(people.userId, users.id)).where(eq(users.workshopId, workshopId)).orderBy(asc(users.name))

async function getUser(db: Db, workshopId: number, id: number) {
  const u = (await listUsers(db, workshopId)).find((x) => x.id === id)
  return u!
}

export async function createUser({ db }: Deps, actor: Actor, input: UserCreate) {
  const passwordHash = await hashPassword(input.password)
  const id = await db
    .transaction(async (tx) => {
      const [u] = await tx
        .insert(users)
        .values({ workshopId: actor.workshopId, email: input.email, name: input.name, role: input.role, passwordHash })
        .returning({ id: users.id })
      await audit(tx, actor, 'create', 'user', u!.id, { email: input.email, role: input.role })
      return u!.id
    })
    .catch((e) => {
      throw isUniqueViolation(e) ? new AppError({ code: 'conflict', message: 'That e-mail is used already', fields: { email: 'is used by another user' } }) : e
    })
  return getUser(db, actor.workshopId, id)
}

export async function updateUser({ db, realtime, cache }: Deps, actor: Actor, id: number, input: UserUpdate) {
  const { version, password, ...values } = input
  if (id === actor.userId && values.active === false)
    throw new AppError({
      code: 'unprocessable',
      message: 'You cannot switch off your own owner account; another owner must do it',
      fields: { active: 'cannot switch yourself off' },
    })
  if (id === actor.userId && values.role && values.role !== 'owner')
    throw new AppError({
      code: 'unprocessable',
      message: 'You cannot demote your own owner account; another owner must do it',
      fields: { role: 'cannot demote yourself' },
    })
  const set: Record<string, unknown> = { ...values, updatedAt: new Date() }
  if (password) set.passwordHash = await hashPassword(password)
  await db.transaction(async (tx) => {
    await updateVersioned(tx, users, 'User', { id, workshopId: actor.workshopId, version, values: set })
    await audit(tx, actor, 'update', 'user', id, { ...values, password: password ? 'changed' : undefined })
  })
  dropSessionUsers(cache, id)
  // Switched off, new role or new password: their live connections end (a client still signed in reconnects with its new rooms).
  if (values.active === false || values.role || password) realtime.endSessions({ userId: id })
  return getUser(db, actor.workshopId, id)
}
