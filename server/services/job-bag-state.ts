// A job bag's own state as its steps move: the row lock, which steps are ready, and the bag's status derived from its steps.
// Used by the office's routing edits (job-bags.ts) and by the bench floor (bench.ts); it imports neither.
import { eq, sql } from 'drizzle-orm'
import { FINISHED_OPERATION, canMoveJobBag, deriveJobBagStatus, type OperationStatus } from '../../shared/domain/status'
import type { Tx } from '../db/client'
import { jobBags, operations } from '../db/schema/index'
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

/** Brings the job bag's status in line with its operations (audited when it moves). */
export async function syncJobBagStatus(tx: Tx, actor: Actor, jobBagId: number, readied: OperationChange[] = []): Promise<BagChange> {
  const [bag] = await tx.select({ id: jobBags.id, status: jobBags.status, version: jobBags.version }).from(jobBags).where(eq(jobBags.id, jobBagId))
  const ops = await tx.select({ status: operations.status }).from(operations).where(eq(operations.jobBagId, jobBagId))
  const to = deriveJobBagStatus(
    bag!.status,
    ops.map((o) => o.status),
  )
  if (to === bag!.status || !canMoveJobBag(bag!.status, to)) return { jobBag: bag!, statusChanged: false, readied }
  const [u] = await tx
    .update(jobBags)
    .set({ status: to, version: sql`${jobBags.version} + 1` })
    .where(eq(jobBags.id, jobBagId))
    .returning({ id: jobBags.id, status: jobBags.status, version: jobBags.version })
  await audit(tx, actor, 'status', 'job-bag', jobBagId, { from: bag!.status, to })
  return { jobBag: u!, statusChanged: true, readied }
}
