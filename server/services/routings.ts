// Routing templates and their steps (a small graph: steps may branch and join).
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { Template, TemplateInput } from '../../shared/schemas/routing'
import { templateWarnings } from '../../shared/domain/template-warnings'
import type { Db, Trx } from '../db/client'
import { operationKinds, routingTemplates, templateSteps } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { isUniqueViolation, updateVersioned } from './versioned'

export async function listTemplates(db: Db, workshopId: number): Promise<Template[]> {
  const rows = await db.select().from(routingTemplates).where(eq(routingTemplates.workshopId, workshopId)).orderBy(asc(routingTemplates.name))
  if (!rows.length) return []
  const steps = await db
    .select()
    .from(templateSteps)
    .where(
      inArray(
        templateSteps.templateId,
        rows.map((r) => r.id),
      ),
    )
    .orderBy(asc(templateSteps.seq))
  const kinds = await db
    .select({ id: operationKinds.id, outside: operationKinds.outside })
    .from(operationKinds)
    .where(eq(operationKinds.workshopId, workshopId))
  const outside = new Set(kinds.filter((k) => k.outside).map((k) => k.id))
  return rows.map((t) => {
    const own = steps
      .filter((s) => s.templateId === t.id)
      .map((s) => ({
        id: s.id,
        key: s.key,
        kindId: s.kindId,
        name: s.name,
        baseMinutes: s.baseMinutes,
        perStoneMinutes: s.perStoneMinutes,
        perMmMinutes: s.perMmMinutes,
        sizeBandFactors: s.sizeBandFactors,
        roleFactors: s.roleFactors,
        requiredLevel: s.requiredLevel,
        waitAfterMinutes: s.waitAfterMinutes,
        leadDays: s.leadDays,
        after: s.after,
      }))
    return {
      id: t.id,
      code: t.code,
      name: t.name,
      description: t.description,
      learningRate: t.learningRate,
      version: t.version,
      steps: own,
      warnings: templateWarnings(own, (k) => outside.has(k)),
    }
  })
}

export async function getTemplate(db: Db, workshopId: number, id: number) {
  const t = (await listTemplates(db, workshopId)).find((x) => x.id === id)
  if (!t) throw notFound('Routing template')
  return t
}

async function writeSteps(tx: Trx, workshopId: number, templateId: number, steps: TemplateInput['steps']) {
  const kindIds = [...new Set(steps.map((s) => s.kindId))]
  const found = await tx
    .select({ id: operationKinds.id })
    .from(operationKinds)
    .where(and(eq(operationKinds.workshopId, workshopId), inArray(operationKinds.id, kindIds)))
  const ok = new Set(found.map((f) => f.id))
  steps.forEach((s, i) => {
    if (!ok.has(s.kindId)) throw invalid(`steps.${i}.kindId`, 'is not an operation kind of this workshop')
  })
  await tx.delete(templateSteps).where(eq(templateSteps.templateId, templateId))
  await tx.insert(templateSteps).values(steps.map((s, seq) => ({ templateId, seq, ...s })))
}

const codeTaken = (e: unknown) =>
  isUniqueViolation(e) ? new AppError({ code: 'conflict', message: 'That code is used already', fields: { code: 'is used by another template' } }) : e

export async function createTemplate({ db, realtime }: Deps, actor: Actor, input: TemplateInput) {
  const id = await db
    .transaction(async (tx) => {
      const [t] = await tx
        .insert(routingTemplates)
        .values({ workshopId: actor.workshopId, code: input.code, name: input.name, description: input.description, learningRate: input.learningRate })
        .returning()
      await writeSteps(tx, actor.workshopId, t!.id, input.steps)
      await audit(tx, actor, 'create', 'routing-template', t!.id, { code: input.code, learningRate: input.learningRate })
      return t!.id
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'routing', id })
  return getTemplate(db, actor.workshopId, id)
}

export async function updateTemplate({ db, realtime }: Deps, actor: Actor, id: number, input: TemplateInput & { version: number }) {
  const { version, steps, ...values } = input
  await db
    .transaction(async (tx) => {
      await updateVersioned(tx, routingTemplates, 'Routing template', { id, workshopId: actor.workshopId, version, values })
      await writeSteps(tx, actor.workshopId, id, steps)
      await audit(tx, actor, 'update', 'routing-template', id, { code: input.code, steps: steps.length, learningRate: input.learningRate })
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'routing', id })
  return getTemplate(db, actor.workshopId, id)
}
