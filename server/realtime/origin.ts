// Which browser tab a request came from (header x-client-id), kept for the request's async work so hub.emit can name it in the events it sends.
import { AsyncLocalStorage } from 'node:async_hooks'
import type { RequestHandler } from 'express'

/** The header each browser tab sends with its id (made once per tab in src/api/client.ts). */
export const CLIENT_ID_HEADER = 'x-client-id'
/** A tab id is a short token; anything else is ignored (the event then simply carries no origin). */
const CLIENT_ID = /^[A-Za-z0-9_-]{8,64}$/

const store = new AsyncLocalStorage<string>()

/** Runs the rest of the request with its tab id, when it sent a well-formed one. */
export const realtimeOrigin: RequestHandler = (req, _res, next) => {
  const id = req.get(CLIENT_ID_HEADER)
  if (id && CLIENT_ID.test(id)) store.run(id, next)
  else next()
}

/** The tab id of the request whose work is running now, or undefined (jobs, timers, scripts, requests without one). */
export const currentOrigin = (): string | undefined => store.getStore()

/** Runs fn as if a request from that tab made it (tests). */
export const withOrigin = <T>(origin: string, fn: () => T): T => store.run(origin, fn)
