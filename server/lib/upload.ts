// Receiving one uploaded file: multipart parsing in memory with limits, the type told by its first bytes, a display-safe name.
import type { Request, Response } from 'express'
import multer from 'multer'
import { AppError, invalid } from '../errors/app-error'

export interface Received {
  buffer: Buffer
  originalName: string
  fields: Record<string, string>
}

/** Types accepted, recognised by their signature (magic bytes) — never by the extension or the client's claimed type. */
export function sniffType(b: Buffer): { mime: string; ext: string; image: boolean } | null {
  if (b.length >= 8 && b.subarray(0, 8).equals(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])))
    return { mime: 'image/png', ext: '.png', image: true }
  if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return { mime: 'image/jpeg', ext: '.jpg', image: true }
  if (b.length >= 12 && b.toString('latin1', 0, 4) === 'RIFF' && b.toString('latin1', 8, 12) === 'WEBP')
    return { mime: 'image/webp', ext: '.webp', image: true }
  if (b.length >= 5 && b.toString('latin1', 0, 5) === '%PDF-') return { mime: 'application/pdf', ext: '.pdf', image: false }
  return null
}

/** The uploader's file name for display only: no folders, no control or reserved characters, not too long. */
export function displayName(raw: string, ext: string): string {
  const base = raw.split(/[\\/]/).pop() ?? ''
  const clean = base
    .normalize('NFC')
    // eslint-disable-next-line no-control-regex -- control characters are exactly what the file name must not keep
    .replace(/[\u0000-\u001f\u007f<>:"|?*]/g, '')
    .replace(/\s+/g, ' ')
    .replace(/^[.\s]+/, '')
    .trim()
    .slice(0, 120)
  return clean || `file${ext}`
}

/** Content-Disposition with an ASCII fallback and the UTF-8 name (RFC 6266 / 5987); nothing from the name can break the header. */
export function contentDisposition(type: 'inline' | 'attachment', name: string): string {
  const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_')
  return `${type}; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name).replace(/['()*]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)}`
}

const MULTER_REASONS: Record<string, [number, string]> = {
  LIMIT_FILE_SIZE: [413, 'is too large'],
  LIMIT_FILE_COUNT: [400, 'send one file at a time'],
  LIMIT_UNEXPECTED_FILE: [400, 'send one file at a time, in the field "file"'],
  LIMIT_PART_COUNT: [400, 'has too many parts'],
  LIMIT_FIELD_COUNT: [400, 'has too many fields'],
  LIMIT_FIELD_KEY: [400, 'has a field name that is too long'],
  LIMIT_FIELD_VALUE: [400, 'has a field value that is too long'],
}

/** Parses a multipart request with one file in field `file`; throws 400/413 with a reason. */
export async function receiveOne(req: Request, res: Response, maxBytes: number): Promise<Received> {
  if (!req.is('multipart/form-data')) throw invalid('file', 'is required (send multipart/form-data with the field "file")')
  const parse = multer({
    storage: multer.memoryStorage(),
    defParamCharset: 'utf8',
    preservePath: true,
    limits: { fileSize: maxBytes, files: 1, fields: 5, fieldSize: 2000, parts: 8 },
  }).single('file')
  try {
    await new Promise<void>((resolve, reject) => parse(req, res, (err?: unknown) => (err ? reject(err) : resolve())))
  } catch (err) {
    if (err instanceof multer.MulterError) {
      const [status, reason] = MULTER_REASONS[err.code] ?? [400, 'could not be read']
      const limit = err.code === 'LIMIT_FILE_SIZE' ? ` (at most ${Math.round(maxBytes / 1024 / 102.4) / 10} MB)` : ''
      throw new AppError({ code: 'validation', status, message: `file: ${reason}${limit}`, fields: { file: `${reason}${limit}` } })
    }
    throw new AppError({
      code: 'validation',
      message: 'file: the upload could not be read (broken multipart body)',
      fields: { file: 'the upload could not be read' },
    })
  }
  const f = (req as Request & { file?: Express.Multer.File }).file
  if (!f) throw invalid('file', 'is required (the field "file")')
  if (f.size === 0) throw invalid('file', 'is empty')
  // Browsers send the bare file name; folders or control characters in it mean a crafted request.
  // eslint-disable-next-line no-control-regex -- a name with control characters in it is refused
  if (/[\\/\u0000-\u001f]/.test(f.originalname) || f.originalname.split('.').every((p) => p === ''))
    throw invalid('file', 'has a file name with folders or control characters in it; send the bare file name')
  const fields = Object.fromEntries(Object.entries((req.body ?? {}) as Record<string, unknown>).map(([k, v]) => [k, String(v)]))
  return { buffer: f.buffer, originalName: f.originalname, fields }
}
