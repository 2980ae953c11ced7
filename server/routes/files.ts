// File routes: upload to an order or a job bag (multipart, field "file" plus "kind"), list, download, thumbnail, delete.
import type { Response } from 'express'
import { EVERYONE, STAFF, type Role } from '../../shared/domain/roles'
import { fileList, fileRemoved, storedFile } from '../../shared/schemas/file'
import { route, type Deps } from '../lib/route'
import { contentDisposition, receiveOne } from '../lib/upload'
import * as files from '../services/files'
import { idParam } from './params'

const FRONT: Role[] = ['owner', 'manager', 'sales']
const DEFAULT_MAX = 10 * 1024 * 1024
const maxOf = (deps: Deps) => deps.uploadMaxBytes ?? DEFAULT_MAX

function sendContent(res: Response, c: Awaited<ReturnType<typeof files.readFileContent>>, disposition: 'inline' | 'attachment') {
  res.setHeader('Content-Type', c.mime)
  res.setHeader('Content-Length', String(c.body.length))
  res.setHeader('Content-Disposition', contentDisposition(disposition, c.file.originalName))
  res.setHeader('Cache-Control', 'private, max-age=3600')
  // The file is shown, never run: no scripts, no plugins, even if a viewer would try.
  res.setHeader('Content-Security-Policy', "default-src 'none'; img-src 'self'; style-src 'unsafe-inline'; sandbox")
  res.end(c.body)
  return undefined
}

export const fileRoutes = [
  route({
    method: 'post',
    path: '/orders/:id/files',
    roles: FRONT,
    status: 201,
    summary: 'Upload a sketch, reference or photo to an order (multipart: file, kind)',
    params: idParam,
    response: storedFile,
    handler: async ({ deps, actor, params, req, res }) => files.addFile(deps, actor, { type: 'order', id: params.id }, await receiveOne(req, res, maxOf(deps))),
  }),
  route({
    method: 'post',
    path: '/job-bags/:id/files',
    roles: EVERYONE,
    status: 201,
    summary: 'Upload a file to a job bag (bench: progress photos only)',
    params: idParam,
    response: storedFile,
    handler: async ({ deps, actor, params, req, res }) =>
      files.addFile(deps, actor, { type: 'jobBag', id: params.id }, await receiveOne(req, res, maxOf(deps))),
  }),
  route({
    method: 'get',
    path: '/orders/:id/files',
    roles: FRONT,
    summary: 'Files of an order',
    params: idParam,
    response: fileList,
    handler: ({ deps, actor, params }) => files.listFiles(deps.db, actor, { type: 'order', id: params.id }),
  }),
  route({
    method: 'get',
    path: '/job-bags/:id/files',
    roles: EVERYONE,
    summary: 'Files of a job bag',
    params: idParam,
    response: fileList,
    handler: ({ deps, actor, params }) => files.listFiles(deps.db, actor, { type: 'jobBag', id: params.id }),
  }),
  route({
    method: 'get',
    path: '/files/:id',
    roles: EVERYONE,
    summary: 'Download a file (images shown inline, PDFs as attachment)',
    params: idParam,
    handler: async ({ deps, actor, params, res }) => {
      const c = await files.readFileContent(deps, actor, params.id, 'file')
      return sendContent(res, c, c.mime.startsWith('image/') ? 'inline' : 'attachment')
    },
  }),
  route({
    method: 'get',
    path: '/files/:id/thumbnail',
    roles: EVERYONE,
    summary: 'Thumbnail of an image (WebP)',
    params: idParam,
    handler: async ({ deps, actor, params, res }) => sendContent(res, await files.readFileContent(deps, actor, params.id, 'thumbnail'), 'inline'),
  }),
  route({
    method: 'delete',
    path: '/files/:id',
    roles: STAFF,
    summary: 'Remove a file',
    params: idParam,
    response: fileRemoved,
    handler: ({ deps, actor, params }) => files.deleteFile(deps, actor, params.id),
  }),
]
