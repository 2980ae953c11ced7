// A job bag's own state as its steps move: the row lock, which steps are ready, and the bag's status derived from its steps.
// Used by the office's routing edits (job-bags.ts) and by the bench floor (bench.ts); it imports neither.
import { and, eq, sql } from 'drizzle-orm'
import { FINISHED_OPERATION, canMoveJobBag, deriveJobBagStatus, type OperationStatus } from '../../shared/domain/status'
import type { Tx } from '../db/client'
import { jobBags, operations, orders } from '../db/schema/index'
import { notFound } from '../errors/app-error'
import type { Actor } from '../lib/route'
import { audit } from './audit'

export interface OperationChange {
  id: number
  version: number
  status: string
}
export interface BagChange {
  jobBag: { id: number; status: string; version: number }
  statusChanged: boolean
  readied: OperationChange[]
  /** The bag's order, when its status followed (open → in work, or back): the caller emits `order:updated` after commit. */
  order?: { id: number; version: number; status: string }
}

/** Row lock on the job bag: transitions and routing edits of one bag run one at a time. */
export async function lockJobBag(tx: Tx, jobBagId: number) {
  const [b] = await tx.select().from(jobBags).where(eq(jobBags.id, jobBagId)).for('update')
  if (!b) throw notFound('Job bag')
  return b
}

export const finished = (s: string) => (FINISHED_OPERATION as readonly string[]).includes(s)

/** Pending steps whose predecessors are all finished become ready; ready steps that gained an unfinished predecessor go back to pending. */
export async function refreshReadiness(tx: Tx, actor: Actor, jobBagId: number): Promise<OperationChange[]> {
  const ops = await tx
    .select({ id: operations.id, key: operations.key, status: operations.status, after: operations.after })
    .from(operations)
    .where(eq(operations.jobBagId, jobBagId))
  const statusOf = new Map(ops.map((o) => [o.key, o.status]))
  const changes: OperationChange[] = []
  for (const o of ops) {
    const clear = o.after.every((k) => finished(statusOf.get(k) ?? 'skipped'))
    const to: OperationStatus | null = o.status === 'pending' && clear ? 'ready' : o.status === 'ready' && !clear ? 'pending' : null
    if (!to) continue
    const [u] = await tx
      .update(operations)
      .set({ status: to, version: sql`${operations.version} + 1` })
      .where(eq(operations.id, o.id))
      .returning({ id: operations.id, version: operations.version, status: operations.status })
    await audit(tx, actor, to === 'ready' ? 'ready' : 'unready', 'operation', o.id, { from: o.status, to, jobBagId })
    changes.push(u!)
  }
  return changes
}

/** Brings the job bag's status in line with its operations (audited when it moves), and its order's open / in work with its bags. */
export async function syncJobBagStatus(tx: Tx, actor: Actor, jobBagId: number, readied: OperationChange[] = []): Promise<BagChange> {
  const [bag] = await tx.select({ id: jobBags.id, status: jobBags.status, version: jobBags.version }).from(jobBags).where(eq(jobBags.id, jobBagId))
  const ops = await tx.select({ status: operations.status }).from(operations).where(eq(operations.jobBagId, jobBagId))
  const to = deriveJobBagStatus(
    bag!.status,
    ops.map((o) => o.status),
  )
  if (to === bag!.status || !canMoveJobBag(bag!.status, to)) {
    // The bag may have been moved by hand (held, lifted, cancelled) just before: its order follows all the same.
    const order = await syncOrderStatus(tx, actor, jobBagId)
    return { jobBag: bag!, statusChanged: false, readied, ...(order ? { order } : {}) }
  }
  const [u] = await tx
    .update(jobBags)
    .set({ status: to, version: sql`${jobBags.version} + 1` })
    .where(eq(jobBags.id, jobBagId))
    .returning({ id: jobBags.id, status: jobBags.status, version: jobBags.version })
  await audit(tx, actor, 'status', 'job-bag', jobBagId, { from: bag!.status, to })
  const order = await syncOrderStatus(tx, actor, jobBagId)
  return { jobBag: u!, statusChanged: true, readied, ...(order ? { order } : {}) }
}

/**
 * An open order goes in work once any of its job bags is (a step taken up at a bench, sent out or finished), and back to open
 * when every bag still to make is waiting again (a step handed back before anything was done). Ready, collected and cancelled
 * are the office's to set; a bag on hold or cancelled leaves the order as it is.
 */
async function syncOrderStatus(tx: Tx, actor: Actor, jobBagId: number) {
  const [bag] = await tx.select({ orderId: jobBags.orderId }).from(jobBags).where(eq(jobBags.id, jobBagId))
  const [o] = await tx.select({ id: orders.id, status: orders.status }).from(orders).where(eq(orders.id, bag!.orderId))
  if (!o || (o.status !== 'open' && o.status !== 'in-work')) return null
  const bags = await tx.select({ status: jobBags.status }).from(jobBags).where(eq(jobBags.orderId, o.id))
  const working = bags.some((b) => b.status === 'in-work' || b.status === 'complete')
  const allWaiting = bags.every((b) => b.status === 'waiting' || b.status === 'cancelled')
  const to = o.status === 'open' && working ? 'in-work' : o.status === 'in-work' && allWaiting ? 'open' : null
  if (!to) return null
  const [u] = await tx
    .update(orders)
    .set({ status: to, version: sql`${orders.version} + 1`, updatedAt: new Date() })
    // Only from the status read (no lock taken on the order to read it: the office may be changing it at this moment).
    .where(and(eq(orders.id, o.id), eq(orders.status, o.status)))
    .returning({ id: orders.id, version: orders.version, status: orders.status })
  if (!u) return null
  // The version it made is kept with it: the office's edit opened before it still saves over it (`updateOrder`).
  await audit(tx, actor, 'status', 'order', o.id, { from: o.status, to, jobBagId, version: u.version })
  return u
}
