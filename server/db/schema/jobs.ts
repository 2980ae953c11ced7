// Work done through the job queue (server/jobs): planner runs any instance can follow, and the daily mail done once per workshop and day.
import { sql } from 'drizzle-orm'
import { boolean, date, index, integer, jsonb, pgTable, primaryKey, text, uniqueIndex, uuid } from 'drizzle-orm/pg-core'
import type { RunProgress } from '../../../shared/schemas/plan'
import { createdAt, instant } from './common'
import { planVersions } from './work'
import { users, workshops } from './workshop'

export const PLAN_RUN_STATUSES = ['queued', 'running', 'done', 'failed', 'cancelled'] as const
export type PlanRunStatus = (typeof PLAN_RUN_STATUSES)[number]

export interface PlanRunOptions {
  timeLimitSeconds: number
  seed: number
  stability: 'small-changes' | 'best-dates'
  now?: string
}
export type PlanRunProgress = RunProgress

/**
 * One planner run: submitted on any instance, run by the one that takes its job. `attempt` counts the takes; only the
 * instance holding the latest attempt (status running) may write progress or save the draft.
 */
export const planRuns = pgTable(
  'plan_runs',
  {
    id: uuid().primaryKey(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    createdBy: integer().references(() => users.id),
    options: jsonb().$type<PlanRunOptions>().notNull(),
    status: text().$type<PlanRunStatus>().notNull().default('queued'),
    attempt: integer().notNull().default(0),
    /** The instance running it now (host:pid), and the queue job it runs under. */
    instance: text(),
    jobId: text(),
    progress: jsonb().$type<PlanRunProgress>(),
    planId: integer().references(() => planVersions.id, { onDelete: 'set null' }),
    error: text(),
    /** Why a finished run left no draft (nothing better than the live plan). */
    note: text(),
    cancelRequested: boolean().notNull().default(false),
    createdAt: createdAt(),
    startedAt: instant(),
    finishedAt: instant(),
    /** Written every few seconds by the running instance; a stale one means that instance is gone. */
    heartbeatAt: instant(),
  },
  (t) => [
    // One run at a time per workshop, whichever instance takes the request.
    uniqueIndex('plan_runs_one_active')
      .on(t.workshopId)
      .where(sql`${t.status} in ('queued', 'running')`),
    index().on(t.status, t.heartbeatAt),
  ],
)

/** The daily money reminders and at-risk digest, done for this workshop and day (written in the same transaction as the mail). */
export const dailyMailRuns = pgTable(
  'daily_mail_runs',
  {
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    day: date({ mode: 'string' }).notNull(),
    doneAt: createdAt(),
    reminders: integer().notNull().default(0),
    digestRecipients: integer().notNull().default(0),
  },
  (t) => [primaryKey({ columns: [t.workshopId, t.day] })],
)
