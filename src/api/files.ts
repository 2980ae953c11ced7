// Files API: list, upload (multipart with the session's security token) and remove files of orders and job bags.
import { fileList, fileRemoved, storedFile, type FileKind, type StoredFile } from '@shared/schemas/file'
import { sessionInfo } from '@shared/schemas/session'
import { ApiError, api, checked } from './client'

export type { FileKind, StoredFile } from '@shared/schemas/file'
export type FileOwner = { type: 'order' | 'jobBag'; id: number }

const base = (o: FileOwner) => (o.type === 'order' ? `/orders/${o.id}/files` : `/job-bags/${o.id}/files`)

export const listFiles = (owner: FileOwner) => api.get(base(owner), { schema: fileList })
export const deleteFile = (id: number) => api.delete(`/files/${id}`, { schema: fileRemoved })

/** Multipart upload; the JSON client cannot send forms, so the token is read from the session (it is the same per session). */
export async function uploadFile(owner: FileOwner, file: File, kind: FileKind): Promise<StoredFile> {
  const session = await api.get('/session', { schema: sessionInfo })
  const form = new FormData()
  form.append('kind', kind)
  form.append('file', file, file.name)
  let res: Response
  try {
    res = await fetch(`/api${base(owner)}`, {
      method: 'POST',
      body: form,
      credentials: 'same-origin',
      headers: { accept: 'application/json', 'x-csrf-token': session.csrfToken },
    })
  } catch {
    throw new ApiError({ status: 0, code: 'network', message: 'The workshop server cannot be reached; check the connection and try again.' })
  }
  if (!res.ok) throw await ApiError.fromResponse(res)
  return checked('POST', base(owner), storedFile, await res.json())
}
