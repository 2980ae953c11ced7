// Accounts that look after themselves: one-time e-mail links (invitations, password resets; only their SHA-256 is kept) and bench PINs.
import { index, integer, pgTable, text, timestamp, uniqueIndex } from 'drizzle-orm/pg-core'
import { createdAt, pk, updatedAt } from './common'
import { people } from './resources'
import { users, workshops } from './workshop'

/**
 * One row per invitation or reset request. The link's random token is never stored, only its SHA-256 (hex);
 * a link works once (usedAt), until expiresAt, and not after it was withdrawn. Resending an invitation replaces the hash.
 */
export const accountTokens = pgTable(
  'account_tokens',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    kind: text().$type<'invite' | 'reset'>().notNull(),
    tokenHash: text().notNull(),
    email: text().notNull(),
    /** Invitations: who is invited, with which role, linked to which person at a bench. */
    name: text().notNull().default(''),
    role: text().$type<'owner' | 'manager' | 'bench' | 'sales'>(),
    personId: integer().references(() => people.id, { onDelete: 'set null' }),
    /** Resets: whose password; invitations: the account made when the link was used. */
    userId: integer().references(() => users.id, { onDelete: 'cascade' }),
    createdBy: integer().references(() => users.id, { onDelete: 'set null' }),
    expiresAt: timestamp({ withTimezone: true }).notNull(),
    usedAt: timestamp({ withTimezone: true }),
    withdrawnAt: timestamp({ withTimezone: true }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.tokenHash), index().on(t.workshopId, t.kind)],
)

/** A person's bench PIN (argon2id), with the failed tries since the last good one and the lock they earned. */
export const personPins = pgTable('person_pins', {
  personId: integer()
    .primaryKey()
    .references(() => people.id, { onDelete: 'cascade' }),
  pinHash: text().notNull(),
  failedAttempts: integer().notNull().default(0),
  lockedUntil: timestamp({ withTimezone: true }),
  updatedAt: updatedAt(),
})
