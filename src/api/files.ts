// Files API: list, upload (multipart with the session's security token) and remove files of orders and job bags.
import { ApiError, api } from './client'

export type FileKind = 'sketch' | 'reference' | 'progress'
export type FileOwner = { type: 'order' | 'jobBag'; id: number }
export interface StoredFile {
  id: number
  orderId: number | null
  jobBagId: number | null
  kind: FileKind
  originalName: string
  mime: string
  size: number
  width: number | null
  height: number | null
  uploadedBy: number | null
  uploadedByName: string | null
  createdAt: string
  url: string
  thumbnailUrl: string | null
}

const base = (o: FileOwner) => (o.type === 'order' ? `/orders/${o.id}/files` : `/job-bags/${o.id}/files`)

export const listFiles = (owner: FileOwner) => api.get<{ items: StoredFile[] }>(base(owner))
export const deleteFile = (id: number) => api.delete<{ id: number; deleted: boolean }>(`/files/${id}`)

/** Multipart upload; the JSON client cannot send forms, so the token is read from the session (it is the same per session). */
export async function uploadFile(owner: FileOwner, file: File, kind: FileKind): Promise<StoredFile> {
  const session = await api.get<{ csrfToken: string }>('/session')
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
  return (await res.json()) as StoredFile
}
