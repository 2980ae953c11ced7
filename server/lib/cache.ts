// The app's one read cache (board, week load, promise checks, signed-in users): entries by workshop and key, dropped on
// every recorded change — made on this instance or, through PostgreSQL LISTEN/NOTIFY, on another one.
import type { Realtime } from '../realtime/hub'

/** Scope of entries that belong to no single workshop (signed-in users); dropped with every workshop. */
export const ANY_WORKSHOP = 0

export interface CacheOptions {
  /** Age after which an entry is loaded again even without a change. */
  ttlMs: number
  /**
   * Before answering from the cache, compare the entry with the workshop's latest change number in the database (one
   * small indexed query): a change committed on another instance whose note has not arrived yet still makes it stale.
   */
  verify?: boolean
  /** Load and store anew whatever is cached. */
  replace?: boolean
}

interface Entry {
  workshopId: number
  at: number
  seq: number
  value: unknown
}

export class Cache {
  private readonly entries = new Map<string, Entry>()
  /** Bumped on every drop of a workshop: a load that began before the drop must not fill the cache after it. */
  private readonly generation = new Map<number, number>()
  private epoch = 0

  constructor(
    private readonly realtime: Realtime,
    private readonly maxEntries = 500,
  ) {
    realtime.onChange((workshopId, _seq, key) => (key ? this.drop(workshopId, key) : this.dropWorkshop(workshopId)))
    realtime.onReset(() => this.dropAll())
  }

  /** The cached value, or `load()`'s (stored unless the workshop changed meanwhile). */
  async get<T>(workshopId: number, key: string, load: () => Promise<T> | T, o: CacheOptions): Promise<T> {
    const k = `${workshopId}|${key}`
    const hit = this.entries.get(k)
    let latest: number | null = null
    if (hit && !o.replace && Date.now() - hit.at < o.ttlMs) {
      if (!o.verify) return hit.value as T
      latest = await this.realtime.latestSeq(workshopId)
      if (latest <= hit.seq) return hit.value as T
    }
    const gen = this.generationOf(workshopId)
    const epoch = this.epoch
    // The number read before loading: what is loaded is at least this fresh.
    const seq = o.verify ? (latest ?? (await this.realtime.latestSeq(workshopId))) : 0
    const value = await load()
    if (this.generationOf(workshopId) === gen && this.epoch === epoch) this.set(workshopId, key, value, seq)
    return value
  }

  set(workshopId: number, key: string, value: unknown, seq = 0) {
    const k = `${workshopId}|${key}`
    this.entries.delete(k)
    this.entries.set(k, { workshopId, at: Date.now(), seq, value })
    if (this.entries.size > this.maxEntries) this.entries.delete(this.entries.keys().next().value!)
  }

  /** Drops one key here and, with `everywhere`, on the other instances too. */
  drop(workshopId: number, key: string, o: { everywhere?: boolean } = {}) {
    this.bump(workshopId)
    this.entries.delete(`${workshopId}|${key}`)
    if (o.everywhere) this.realtime.announceDrop(workshopId, key)
  }

  /** Drops everything cached for a workshop (and what belongs to no single workshop). */
  dropWorkshop(workshopId: number, o: { everywhere?: boolean } = {}) {
    this.bump(workshopId)
    if (workshopId !== ANY_WORKSHOP) this.bump(ANY_WORKSHOP)
    for (const [k, e] of this.entries) if (e.workshopId === workshopId || e.workshopId === ANY_WORKSHOP) this.entries.delete(k)
    if (o.everywhere) this.realtime.announceDrop(workshopId)
  }

  dropAll() {
    this.epoch++
    this.entries.clear()
  }

  get size() {
    return this.entries.size
  }

  private generationOf(workshopId: number) {
    return this.generation.get(workshopId) ?? 0
  }

  private bump(workshopId: number) {
    this.generation.set(workshopId, this.generationOf(workshopId) + 1)
  }
}

/** `cache.get` when the app has a cache; a plain load otherwise (scripts, setup). */
export function cachedOr<T>(cache: Cache | undefined, workshopId: number, key: string, load: () => Promise<T> | T, o: CacheOptions): Promise<T> {
  return cache ? cache.get(workshopId, key, load, o) : Promise.resolve(load())
}
