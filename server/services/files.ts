// Files of orders and job bags: checked by content, stored under generated names in the upload directory, with thumbnails.
import { randomUUID } from 'node:crypto'
import { mkdir, readFile, unlink, writeFile } from 'node:fs/promises'
import { resolve, sep } from 'node:path'
import { and, desc, eq } from 'drizzle-orm'
import sharp from 'sharp'
import type { Role } from '../../shared/domain/roles'
import type { FileRemoved } from '../../shared/schemas/file'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { FILE_KINDS, type FileKind } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { displayName, sniffType, type Received } from '../lib/upload'
import { audit } from './audit'

export type FileOwner = { type: 'order'; id: number } | { type: 'jobBag'; id: number }

/** Who may see files: orders are front-office work; job bags are read on the bench too. */
const SEES: Record<FileOwner['type'], Role[]> = { order: ['owner', 'manager', 'sales'], jobBag: ['owner', 'manager', 'sales', 'bench'] }
const THUMB_PX = 320

function dirOf(deps: Deps) {
  return resolve(deps.uploadDir ?? '.data/uploads')
}
/** A stored name inside the upload directory, refusing anything that would leave it. */
function pathIn(dir: string, stored: string) {
  const p = resolve(dir, stored)
  if (!p.startsWith(dir + sep)) throw new Error('stored file name leaves the upload directory')
  return p
}

async function requireOwner(db: Db, workshopId: number, owner: FileOwner) {
  const table = owner.type === 'order' ? s.orders : s.jobBags
  const [row] = await db
    .select({ id: table.id })
    .from(table)
    .where(and(eq(table.id, owner.id), eq(table.workshopId, workshopId)))
  if (!row) throw notFound(owner.type === 'order' ? 'Order' : 'Job bag')
}

const publicFile = (f: typeof s.files.$inferSelect & { uploadedByName?: string | null }) => ({
  id: f.id,
  orderId: f.orderId,
  jobBagId: f.jobBagId,
  kind: f.kind,
  originalName: f.originalName,
  mime: f.mime,
  size: f.size,
  width: f.width,
  height: f.height,
  uploadedBy: f.uploadedBy,
  uploadedByName: f.uploadedByName ?? null,
  createdAt: f.createdAt,
  url: `/api/files/${f.id}`,
  thumbnailUrl: f.thumbnailName ? `/api/files/${f.id}/thumbnail` : null,
})

export async function addFile(deps: Deps, actor: Actor, owner: FileOwner, upload: Received) {
  await requireOwner(deps.db, actor.workshopId, owner)
  const kindRaw = upload.fields.kind ?? (actor.role === 'bench' ? 'progress' : 'reference')
  if (!(FILE_KINDS as readonly string[]).includes(kindRaw)) throw invalid('kind', `must be one of: ${FILE_KINDS.join(', ')}`)
  const kind = kindRaw as FileKind
  if (actor.role === 'bench' && kind !== 'progress') throw new AppError({ code: 'forbidden', message: 'At the bench you can add progress photos only.' })
  const type = sniffType(upload.buffer)
  if (!type) throw invalid('file', 'must be a JPEG, PNG or WebP image or a PDF (its content is not one of these, whatever its name says)')
  let width: number | null = null,
    height: number | null = null,
    thumb: Buffer | null = null
  if (type.image) {
    try {
      const meta = await sharp(upload.buffer).metadata()
      width = meta.width ?? null
      height = meta.height ?? null
      thumb = await sharp(upload.buffer)
        .rotate()
        .resize({ width: THUMB_PX, height: THUMB_PX, fit: 'inside', withoutEnlargement: true })
        .webp({ quality: 78 })
        .toBuffer()
    } catch {
      throw invalid('file', 'is not a readable image (damaged or cut short)')
    }
  }
  const dir = dirOf(deps)
  await mkdir(dir, { recursive: true })
  const stem = randomUUID()
  const storedName = `${stem}${type.ext}`
  const thumbnailName = thumb ? `${stem}.thumb.webp` : null
  await writeFile(pathIn(dir, storedName), upload.buffer, { flag: 'wx' })
  if (thumb && thumbnailName) await writeFile(pathIn(dir, thumbnailName), thumb, { flag: 'wx' })
  try {
    const row = await deps.db.transaction(async (tx) => {
      const [f] = await tx
        .insert(s.files)
        .values({
          workshopId: actor.workshopId,
          orderId: owner.type === 'order' ? owner.id : null,
          jobBagId: owner.type === 'jobBag' ? owner.id : null,
          kind,
          storedName,
          thumbnailName,
          originalName: displayName(upload.originalName, type.ext),
          mime: type.mime,
          size: upload.buffer.length,
          width,
          height,
          uploadedBy: actor.userId,
        })
        .returning()
      await audit(tx, actor, 'upload', 'file', f!.id, { owner: owner.type, ownerId: owner.id, kind, mime: type.mime, size: upload.buffer.length })
      return f!
    })
    deps.realtime.emit(actor.workshopId, 'file:added', { id: row.id, orderId: row.orderId, jobBagId: row.jobBagId })
    return publicFile({ ...row, uploadedByName: actor.name })
  } catch (err) {
    await Promise.all([unlink(pathIn(dir, storedName)), thumbnailName ? unlink(pathIn(dir, thumbnailName)) : null].map((p) => p?.catch(() => {})))
    throw err
  }
}

export async function listFiles(db: Db, actor: Actor, owner: FileOwner) {
  await requireOwner(db, actor.workshopId, owner)
  const col = owner.type === 'order' ? s.files.orderId : s.files.jobBagId
  const rows = await db
    .select({ f: s.files, by: s.users.name })
    .from(s.files)
    .leftJoin(s.users, eq(s.users.id, s.files.uploadedBy))
    .where(and(eq(col, owner.id), eq(s.files.workshopId, actor.workshopId)))
    .orderBy(desc(s.files.createdAt), desc(s.files.id))
  return { items: rows.map((r) => publicFile({ ...r.f, uploadedByName: r.by })) }
}

/** A file the actor may see; another workshop's file or one the role may not see is simply not found. */
async function visibleFile(db: Db, actor: Actor, id: number) {
  const [f] = await db
    .select()
    .from(s.files)
    .where(and(eq(s.files.id, id), eq(s.files.workshopId, actor.workshopId)))
  if (!f || !SEES[f.orderId ? 'order' : 'jobBag'].includes(actor.role)) throw notFound('File')
  return f
}

export async function readFileContent(deps: Deps, actor: Actor, id: number, which: 'file' | 'thumbnail') {
  const f = await visibleFile(deps.db, actor, id)
  const name = which === 'file' ? f.storedName : f.thumbnailName
  if (!name) throw notFound('Thumbnail')
  try {
    const body = await readFile(pathIn(dirOf(deps), name))
    return { file: publicFile(f), body, mime: which === 'file' ? f.mime : 'image/webp' }
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') throw notFound('File content')
    throw err
  }
}

export async function deleteFile(deps: Deps, actor: Actor, id: number): Promise<FileRemoved> {
  const f = await visibleFile(deps.db, actor, id)
  await deps.db.transaction(async (tx) => {
    await tx.delete(s.files).where(eq(s.files.id, f.id))
    await audit(tx, actor, 'delete', 'file', f.id, { originalName: f.originalName, orderId: f.orderId, jobBagId: f.jobBagId })
  })
  const dir = dirOf(deps)
  for (const n of [f.storedName, f.thumbnailName]) if (n) await unlink(pathIn(dir, n)).catch(() => {})
  deps.realtime.emit(actor.workshopId, 'file:removed', { id: f.id, orderId: f.orderId, jobBagId: f.jobBagId })
  return { id: f.id, deleted: true }
}
