// Uploaded files (sketches, references, progress photos) of orders and job bags.
import { index, integer, pgTable, text } from 'drizzle-orm/pg-core'
import { FILE_KINDS } from '../../../shared/schemas/file'
import { createdAt, pk } from './common'
import { jobBags, orders } from './work'
import { users, workshops } from './workshop'

export { FILE_KINDS }
export type FileKind = (typeof FILE_KINDS)[number]

/** An uploaded image or PDF, stored under a generated name; exactly one of orderId / jobBagId is set. */
export const files = pgTable(
  'files',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    orderId: integer().references(() => orders.id, { onDelete: 'cascade' }),
    jobBagId: integer().references(() => jobBags.id, { onDelete: 'cascade' }),
    kind: text().$type<FileKind>().notNull(),
    /** Generated name inside the upload directory (uuid + extension from the detected type). */
    storedName: text().notNull(),
    thumbnailName: text(),
    /** The uploader's file name, cleaned; for display and the download name only. */
    originalName: text().notNull(),
    mime: text().notNull(),
    size: integer().notNull(),
    width: integer(),
    height: integer(),
    uploadedBy: integer().references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.orderId), index().on(t.jobBagId)],
)
