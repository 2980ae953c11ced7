// Optimistic concurrency for workshop-owned rows: update only the version the user edited, else 409 (or 404).
import { and, eq, sql } from 'drizzle-orm'
import type { PgColumn, PgTable } from 'drizzle-orm/pg-core'
import type { Tx } from '../db/client'
import { notFound, staleVersion } from '../errors/app-error'

/* eslint-disable @typescript-eslint/no-explicit-any -- Drizzle cannot type a query over a table known only as "some versioned
   table"; the answers are typed for callers by T['$inferSelect'] below. */
type VersionedTable = PgTable & { id: PgColumn; version: PgColumn; workshopId: PgColumn }

export async function updateVersioned<T extends VersionedTable>(
  tx: Tx,
  table: T,
  what: string,
  o: { id: number; workshopId: number; version: number; values: Record<string, unknown> },
): Promise<T['$inferSelect']> {
  const rows = await (tx as any)
    .update(table)
    .set({ ...o.values, version: sql`${table.version} + 1` })
    .where(and(eq(table.id, o.id), eq(table.workshopId, o.workshopId), eq(table.version, o.version)))
    .returning()
  if (rows[0]) return rows[0]
  const exists = await (tx as any)
    .select({ id: table.id })
    .from(table)
    .where(and(eq(table.id, o.id), eq(table.workshopId, o.workshopId)))
  throw exists.length ? staleVersion(what) : notFound(what)
}

export async function requireOwned<T extends VersionedTable>(tx: Tx, table: T, what: string, id: number, workshopId: number): Promise<T['$inferSelect']> {
  const rows = await (tx as any)
    .select()
    .from(table)
    .where(and(eq(table.id, id), eq(table.workshopId, workshopId)))
  if (!rows[0]) throw notFound(what)
  return rows[0]
}

/** Unique-violation from PostgreSQL (23505) turned into a field error. */
export function isUniqueViolation(err: unknown): boolean {
  const e = err as { code?: string; cause?: { code?: string } }
  return e?.code === '23505' || e?.cause?.code === '23505'
}
