// When a planned piece counts as late, tight or on time against its due day: one rule for the board, its words and the digest.

export type JobRisk = 'late' | 'at-risk' | 'on-time'

/**
 * Late: it finishes after its due day ends. Tight ('at-risk'): it finishes on its due day, or with less than one working day
 * of open hours (`dayMinutes`) left before its due day ends. On time: it finishes before its due day with at least a working day to spare.
 * Instants are in milliseconds; `spareWorkingMinutes` is the open time from the finish to the end of the due day.
 */
export function jobRisk(o: { finish: number; dueDayStart: number; dueDayEnd: number; spareWorkingMinutes: number; dayMinutes: number }): JobRisk {
  if (o.finish > o.dueDayEnd) return 'late'
  if (o.finish >= o.dueDayStart || o.spareWorkingMinutes < o.dayMinutes) return 'at-risk'
  return 'on-time'
}
