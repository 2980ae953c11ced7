// Signed-in users kept in the app's read cache: the key they are kept under, and dropping them after a change to a user or a person (here and on every other instance).
import { ANY_WORKSHOP, type Cache } from './cache'

/** Cache key of one signed-in user (scope ANY_WORKSHOP: a user is looked up before their workshop is known). */
export const sessionUserKey = (userId: number) => `user|${userId}`

/** Drops one signed-in user, or all of them, from the cache; scripts without a cache have nothing to drop. */
export function dropSessionUsers(cache: Cache | undefined, userId?: number) {
  if (!cache) return
  if (userId === undefined) cache.dropWorkshop(ANY_WORKSHOP, { everywhere: true })
  else cache.drop(ANY_WORKSHOP, sessionUserKey(userId), { everywhere: true })
}
