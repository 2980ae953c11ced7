// Files of orders and job bags as the API answers them: a stored file with its download and thumbnail addresses.
import { z } from 'zod'
import { wireInt } from './common'

/** A sketch or reference from the office, or a progress photo from the bench. */
export const FILE_KINDS = ['sketch', 'reference', 'progress'] as const
export const fileKind = z.enum(FILE_KINDS)
export type FileKind = z.infer<typeof fileKind>

// ---- Answers ----

export const storedFile = z.object({
  id: wireInt,
  orderId: wireInt.nullable(),
  jobBagId: wireInt.nullable(),
  kind: fileKind,
  originalName: z.string(),
  mime: z.string(),
  size: wireInt,
  /** Pixels of an image; null for a PDF. */
  width: wireInt.nullable(),
  height: wireInt.nullable(),
  uploadedBy: wireInt.nullable(),
  uploadedByName: z.string().nullable(),
  createdAt: z.string(),
  url: z.string(),
  thumbnailUrl: z.string().nullable(),
})
export type StoredFile = z.infer<typeof storedFile>
export const fileList = z.object({ items: z.array(storedFile) })
export const fileRemoved = z.object({ id: wireInt, deleted: z.literal(true) })
export type FileRemoved = z.infer<typeof fileRemoved>
