// Holds metal work for the deposit: with the workshop's "no metal before deposit" on, the first casting or forging step of a
// job bag whose order's deposit is not in cannot start (the planner leaves the bag out; the bench cannot take the step).
import { and, eq, inArray, notInArray } from 'drizzle-orm'
import { METAL_HEAVY_KINDS, WAITING_FOR_DEPOSIT } from '../../shared/domain/deposit-hold'
import type { Db, Trx } from '../db/client'
import * as s from '../db/schema/index'
import { ordersAwaitingDeposit } from './order-terms'

/** Once a metal-heavy step of a bag has been taken (or finished), the metal is committed and later ones are not held. */
const TAKEN = ['claimed', 'running', 'paused', 'done']

export interface DepositHold {
  jobBagId: number
  orderId: number
  reason: string
  operationIds: number[]
}

/**
 * The job bags (of those given, or all open ones) held for the deposit, with the steps held: every not yet started casting
 * or forging step of a bag where none has been taken yet. Empty when the workshop's setting is off.
 */
export async function depositHolds(db: Db | Trx, workshopId: number, bagIds?: number[]): Promise<Map<number, DepositHold>> {
  const out = new Map<number, DepositHold>()
  if (bagIds && !bagIds.length) return out
  const [w] = await db.select({ on: s.workshops.noMetalBeforeDeposit }).from(s.workshops).where(eq(s.workshops.id, workshopId))
  if (!w?.on) return out
  const rows = await db
    .select({ id: s.operations.id, status: s.operations.status, jobBagId: s.jobBags.id, orderId: s.jobBags.orderId })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(
      and(
        eq(s.jobBags.workshopId, workshopId),
        inArray(s.operationKinds.code, [...METAL_HEAVY_KINDS]),
        notInArray(s.jobBags.status, ['complete', 'cancelled']),
        bagIds ? inArray(s.jobBags.id, bagIds) : undefined,
      ),
    )
  const byBag = new Map<number, typeof rows>()
  for (const r of rows) byBag.set(r.jobBagId, [...(byBag.get(r.jobBagId) ?? []), r])
  const candidates = [...byBag.values()].filter(
    (ops) => !ops.some((o) => TAKEN.includes(o.status)) && ops.some((o) => o.status === 'pending' || o.status === 'ready'),
  )
  if (!candidates.length) return out
  const waiting = await ordersAwaitingDeposit(db, workshopId, [...new Set(candidates.map((ops) => ops[0]!.orderId))])
  for (const ops of candidates) {
    const { jobBagId, orderId } = ops[0]!
    if (!waiting.has(orderId)) continue
    out.set(jobBagId, {
      jobBagId,
      orderId,
      reason: WAITING_FOR_DEPOSIT,
      operationIds: ops.filter((o) => o.status === 'pending' || o.status === 'ready').map((o) => o.id),
    })
  }
  return out
}

/** Whether this step waits for the deposit (one step's check, for the bench). */
export async function heldForDeposit(db: Db | Trx, workshopId: number, jobBagId: number, operationId: number) {
  const h = (await depositHolds(db, workshopId, [jobBagId])).get(jobBagId)
  return h && h.operationIds.includes(operationId) ? h : null
}
