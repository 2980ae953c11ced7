// Every PostgreSQL advisory lock key the server takes, in one place so two features never share a key by accident.
// Used as the first of the two keys: pg_advisory_xact_lock(LOCK.x, <workshop or person id>).
export const LOCK = {
  /** Customer reference numbering, per workshop. */
  customerNumbers: 1001,
  /** Order numbering, per workshop. */
  orderNumbers: 1002,
  /** The live plan, per workshop: every change to it (server/planning: drafts, publishing, moves and pins, a promise's booking, a claim's plan effect). */
  livePlan: 1003,
  /** Quote numbering, per workshop. */
  quoteNumbers: 1013,
  /** One running step per person at the bench, per person. */
  personAtBench: 3001,
  /** Pause reasons' order and names, per workshop. */
  pauseReasons: 3002,
  /** The metal ledger, per workshop. */
  metalLedger: 3101,
  /** Invitations, per workshop: one open invitation per address. */
  invitations: 3201,
  /** The daily money reminders and digest, per workshop: done once per day whatever the number of app instances. */
  dailyMail: 3301,
  /** Change-event numbering, per workshop: numbers are committed in the order they are handed out. */
  changeEvents: 4001,
} as const
