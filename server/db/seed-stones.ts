// Demo stones: stone lists on the demo's set pieces (some the customer's own) and the stones counted out and back for
// setting steps already finished; open setting steps plan their minutes from the list.
import { and, eq, inArray, min } from 'drizzle-orm'
import type { Trx } from './client'
import * as s from './schema/index'
import { caratFromDiameter, roundCarat, stoneListStepMinutes } from '../../shared/domain/stones'
import type { PieceParams } from '../../shared/schemas/order'

type NewLine = Omit<typeof s.jobBagStones.$inferInsert, 'jobBagId'>
const round = (sizeMm: number) => ({ caratEach: roundCarat(caratFromDiameter(sizeMm)), caratEstimated: true })

/** The lines of one piece from its routing and description (demo figures; stone prices are made up). */
function linesFor(code: string, piece: string, p: PieceParams, customerId: number, n: number): NewLine[] {
  const own = n % 2 === 0
  if (code === 'pave-pendant')
    return [{ role: 'pave', sizeMm: p.stoneSizeMm, count: p.stoneCount, ...round(p.stoneSizeMm), quality: 'G/H SI', costEachMinor: 900 }]
  if (code === 'bezel-ring')
    return piece.startsWith('Sapphire')
      ? [
          {
            role: 'centre',
            stone: 'sapphire',
            shape: 'oval',
            sizeMm: 6,
            count: 1,
            caratEach: 1.2,
            quality: 'Ceylon, the customer’s grandmother’s',
            customerOwned: true,
            customerId,
          },
        ]
      : [{ role: 'centre', stone: 'moonstone', shape: 'cabochon', sizeMm: 8, count: 1, quality: 'blue sheen', costEachMinor: 4500 }]
  if (code === 'halo-ring') {
    const centre: NewLine = piece.startsWith('Oval')
      ? {
          role: 'centre',
          shape: 'oval',
          sizeMm: 7,
          count: 1,
          caratEach: 0.9,
          quality: 'F VS2',
          ...(own ? { customerOwned: true, customerId } : { costEachMinor: 310000 }),
        }
      : { role: 'centre', sizeMm: 5.2, count: 1, ...round(5.2), quality: 'G VS1', ...(own ? { customerOwned: true, customerId } : { costEachMinor: 240000 }) }
    return [
      centre,
      { role: 'halo', sizeMm: p.stoneSizeMm, count: Math.max(1, p.stoneCount - 1), ...round(p.stoneSizeMm), quality: 'G/H VS', costEachMinor: 1100 },
    ]
  }
  return []
}

export async function seedStones(tx: Trx, workshopId: number): Promise<void> {
  const bags = await tx
    .select({ bag: s.jobBags, code: s.routings.code, learningRate: s.routings.learningRate, order: s.orders })
    .from(s.jobBags)
    .innerJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(and(eq(s.jobBags.workshopId, workshopId), inArray(s.routings.code, ['pave-pendant', 'bezel-ring', 'halo-ring'])))
  let n = 0
  for (const { bag, code, learningRate, order } of bags) {
    const params = bag.params as PieceParams
    const want = linesFor(code, bag.piece, params, order.customerId, n++)
    if (!want.length) continue
    const lines = await tx
      .insert(s.jobBagStones)
      .values(want.map((l) => ({ ...l, jobBagId: bag.id })))
      .returning()
    const [set] = await tx
      .select()
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bag.id), eq(s.operations.key, 'set')))
    if (!set) continue
    if (set.status === 'done' && set.finishedAt) {
      // Counted out when the setting began and back when it finished; a pavé setter takes one spare and brings it back.
      const at = new Date(set.finishedAt).toISOString()
      const [first] = await tx
        .select({ at: min(s.timeRecords.startedAt) })
        .from(s.timeRecords)
        .where(eq(s.timeRecords.operationId, set.id))
      const began = first?.at ? new Date(first.at).toISOString() : at
      for (const l of lines) {
        const total = l.count * params.quantity
        const spare = l.role === 'pave' ? 1 : 0
        await tx
          .insert(s.stoneMovements)
          .values([
            { stoneLineId: l.id, kind: 'issued', count: total + spare, personId: set.plannedPersonId, operationId: set.id, recordedAt: began },
            { stoneLineId: l.id, kind: 'set', count: total, personId: set.plannedPersonId, operationId: set.id, recordedAt: at },
            ...(spare
              ? [{ stoneLineId: l.id, kind: 'returned' as const, count: spare, personId: set.plannedPersonId, operationId: set.id, recordedAt: at }]
              : []),
            ...(l.customerOwned && order.status === 'collected'
              ? [{ stoneLineId: l.id, kind: 'checked-back' as const, count: total, recordedAt: new Date(order.updatedAt ?? at).toISOString() }]
              : []),
          ])
      }
    } else if (['pending', 'ready'].includes(set.status)) {
      // Steps nobody has started plan their minutes from the stone list.
      const [step] = await tx
        .select()
        .from(s.routingSteps)
        .where(and(eq(s.routingSteps.routingId, bag.routingId!), eq(s.routingSteps.key, 'set')))
      if (step && step.perStoneMinutes > 0)
        await tx
          .update(s.operations)
          .set({ estimateMinutes: stoneListStepMinutes(step, { learningRate }, params, lines) })
          .where(eq(s.operations.id, set.id))
    }
  }
}
