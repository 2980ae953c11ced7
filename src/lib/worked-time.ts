// Time worked at the bench in words: short stretches to the second, so a job bag's records visibly add up to its steps' actual time.

/** One time record's worked seconds: from its (corrected) start and end when it has ended, else from its minutes so far; 0 when voided. */
export function workedSeconds(r: { startedAt?: unknown; endedAt?: unknown; minutes?: unknown; voided?: boolean }): number {
  if (r.voided) return 0
  if (typeof r.startedAt === 'string' && typeof r.endedAt === 'string') {
    const ms = Date.parse(r.endedAt) - Date.parse(r.startedAt)
    if (Number.isFinite(ms)) return Math.max(0, Math.round(ms / 1000))
  }
  return Math.round(Number(r.minutes ?? 0) * 60)
}

/** Worked seconds per step, each record rounded to the second first, so a step's total is the sum of its records as shown. */
export function workedByOperation(records: readonly { operationId: number; startedAt: string; endedAt: string | null; minutes: number; voided: boolean }[]) {
  const m = new Map<number, number>()
  for (const r of records) m.set(r.operationId, (m.get(r.operationId) ?? 0) + workedSeconds(r))
  return m
}

/** 103 → "1 min 43 s", 45 → "45 s", 120 → "2 min"; from 10 minutes up, whole minutes: 754 → "13 min". */
export function workedWords(seconds: number): string {
  const s = Math.max(0, Math.round(seconds))
  if (s >= 600) return `${Math.round(s / 60)} min`
  if (s < 60) return `${s} s`
  const min = Math.floor(s / 60)
  const rest = s % 60
  return rest ? `${min} min ${rest} s` : `${min} min`
}
