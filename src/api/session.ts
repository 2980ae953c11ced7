// Session API: who is signed in, sign-in and sign-out (keeps the client's CSRF token in step).
import { sessionInfo, signedOut, type SessionInfo, type SignIn } from '@shared/schemas/session'
import { api, setCsrfToken } from './client'

const parseInfo = (d: unknown): SessionInfo => sessionInfo.parse(d)

export async function fetchSession(): Promise<SessionInfo> {
  const info = await api.get('/session', { parse: parseInfo })
  setCsrfToken(info.csrfToken)
  return info
}

export async function signIn(body: SignIn): Promise<SessionInfo> {
  const info = await api.post('/session', body, { parse: parseInfo })
  setCsrfToken(info.csrfToken)
  return info
}

export async function signOut(): Promise<void> {
  await api.delete('/session', { schema: signedOut })
  setCsrfToken(null)
}
