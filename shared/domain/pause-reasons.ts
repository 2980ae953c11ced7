// Why a person stops work for now: the reasons a workshop starts with (the owner adds, renames and switches them off), and how a reason's code is made.

export interface PauseReasonDefault {
  code: string
  label: string
  needsNote: boolean
  sort: number
}

/**
 * Every workshop starts with these. "waiting-for-parts", "end-of-day", "question-for-manager" and "other" were the fixed
 * reasons before they became the workshop's own, so time records that carry them keep their names.
 */
export const DEFAULT_PAUSE_REASONS: readonly PauseReasonDefault[] = [
  { code: 'break', label: 'Break', needsNote: false, sort: 10 },
  { code: 'waiting-for-stones', label: 'Waiting for stones', needsNote: false, sort: 20 },
  { code: 'waiting-for-parts', label: 'Waiting for parts', needsNote: false, sort: 30 },
  { code: 'waiting-for-approval', label: 'Waiting for the customer’s approval', needsNote: false, sort: 40 },
  { code: 'tool-fault', label: 'Tool or machine fault', needsNote: true, sort: 50 },
  { code: 'called-away', label: 'Called away', needsNote: false, sort: 60 },
  { code: 'question-for-manager', label: 'Question for the manager', needsNote: false, sort: 70 },
  { code: 'end-of-day', label: 'End of day', needsNote: false, sort: 80 },
  { code: 'other', label: 'Other', needsNote: true, sort: 1000 },
]

/** How a time record ends when the work is done rather than paused. */
export const FINISHED = 'finished'

/** A reason's code from its label: lower-case letters and digits joined by hyphens ("Tool / machine fault" → "tool-machine-fault"). */
export function pauseReasonCode(label: string): string {
  const slug = label
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40)
    .replace(/-+$/, '')
  return slug || 'reason'
}
