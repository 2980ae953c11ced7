// People: their link to a user, skills per operation kind (level, speed), weekly pattern and leave.
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { LeaveInput, Person, PersonInput, PersonUpdate } from '../../shared/schemas/person'
import type { Db, Trx } from '../db/client'
import { leave, operationKinds, people, personSkills, users } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { dropSessionUsers } from '../lib/session-users'
import { changeOwnedParts } from './owned-parts'
import { lockLivePlan, storeLiveFigures } from '../planning/live-plan'
import { isUniqueViolation, updateVersioned } from './versioned'

export async function listPeople(db: Db, workshopId: number): Promise<Person[]> {
  const rows = await db
    .select({ p: people, email: users.email })
    .from(people)
    .leftJoin(users, eq(users.id, people.userId))
    .where(eq(people.workshopId, workshopId))
    .orderBy(asc(people.name))
  if (!rows.length) return []
  const ids = rows.map((r) => r.p.id)
  const skills = await db.select().from(personSkills).where(inArray(personSkills.personId, ids))
  const lv = await db.select().from(leave).where(inArray(leave.personId, ids)).orderBy(asc(leave.startsOn))
  return rows.map(({ p, email }) => ({
    id: p.id,
    name: p.name,
    userId: p.userId,
    userEmail: email ?? null,
    weekPattern: p.weekPattern ?? null,
    hourlyRateMinor: p.hourlyRateMinor,
    active: p.active,
    version: p.version,
    skills: skills.filter((s) => s.personId === p.id).map((s) => ({ kindId: s.kindId, level: s.level, speed: s.speed })),
    leave: lv.filter((l) => l.personId === p.id),
  }))
}

async function getPerson(db: Db, workshopId: number, id: number) {
  const p = (await listPeople(db, workshopId)).find((x) => x.id === id)
  if (!p) throw notFound('Person')
  return p
}

async function checkRefs(tx: Trx, workshopId: number, input: Partial<PersonInput>) {
  const kindIds = (input.skills ?? []).map((s) => s.kindId)
  if (kindIds.length) {
    const found = await tx
      .select({ id: operationKinds.id })
      .from(operationKinds)
      .where(and(eq(operationKinds.workshopId, workshopId), inArray(operationKinds.id, kindIds)))
    if (found.length !== kindIds.length) throw invalid('skills', 'names an operation kind that does not exist')
  }
  if (input.userId) {
    const [u] = await tx
      .select({ id: users.id })
      .from(users)
      .where(and(eq(users.id, input.userId), eq(users.workshopId, workshopId)))
    if (!u) throw invalid('userId', 'is not a user of this workshop')
  }
}

const userTaken = (e: unknown) =>
  isUniqueViolation(e)
    ? new AppError({ code: 'conflict', message: 'That user is linked to another person already', fields: { userId: 'is linked to another person already' } })
    : e

export async function createPerson({ db, realtime, cache }: Deps, actor: Actor, input: PersonInput) {
  const id = await db
    .transaction(async (tx) => {
      await checkRefs(tx, actor.workshopId, input)
      const [p] = await tx
        .insert(people)
        .values({
          workshopId: actor.workshopId,
          name: input.name,
          userId: input.userId,
          weekPattern: input.weekPattern,
          hourlyRateMinor: input.hourlyRateMinor,
          active: input.active,
        })
        .returning()
      if (input.skills.length) await tx.insert(personSkills).values(input.skills.map((s) => ({ personId: p!.id, ...s })))
      await audit(tx, actor, 'create', 'person', p!.id, { name: input.name })
      return p!.id
    })
    .catch((e) => {
      throw userTaken(e)
    })
  // A signed-in user's person link may have changed.
  dropSessionUsers(cache)
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'person', id })
  return getPerson(db, actor.workshopId, id)
}

export async function updatePerson({ db, realtime, cache }: Deps, actor: Actor, id: number, input: PersonUpdate) {
  const { version, skills, ...values } = input
  await db
    .transaction(async (tx) => {
      // Their working hours are the calendar: the live plan is checked against them (its lock first).
      if (values.weekPattern !== undefined) await lockLivePlan(tx, actor.workshopId)
      await checkRefs(tx, actor.workshopId, input)
      await updateVersioned(tx, people, 'Person', { id, workshopId: actor.workshopId, version, values })
      if (skills) {
        await tx.delete(personSkills).where(eq(personSkills.personId, id))
        if (skills.length) await tx.insert(personSkills).values(skills.map((s) => ({ personId: id, ...s })))
      }
      await audit(tx, actor, 'update', 'person', id, input as Record<string, unknown>)
      if (values.weekPattern !== undefined) await storeLiveFigures(tx, actor.workshopId)
    })
    .catch((e) => {
      throw userTaken(e)
    })
  // A signed-in user's person link may have changed.
  dropSessionUsers(cache)
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'person', id })
  return getPerson(db, actor.workshopId, id)
}

const personOf = (id: number) => ({ table: people, entity: 'person' as const, what: 'Person', id })

export async function addLeave(deps: Deps, actor: Actor, personId: number, input: LeaveInput) {
  await changeOwnedParts(deps, actor, personOf(personId), { action: 'add-leave', details: input }, (tx) => tx.insert(leave).values({ personId, ...input }))
  return getPerson(deps.db, actor.workshopId, personId)
}

export async function removeLeave(deps: Deps, actor: Actor, personId: number, leaveId: number) {
  await changeOwnedParts(deps, actor, personOf(personId), { action: 'remove-leave', details: { leaveId } }, async (tx) => {
    const r = await tx
      .delete(leave)
      .where(and(eq(leave.id, leaveId), eq(leave.personId, personId)))
      .returning()
    if (!r.length) throw notFound('Leave')
  })
  return getPerson(deps.db, actor.workshopId, personId)
}
