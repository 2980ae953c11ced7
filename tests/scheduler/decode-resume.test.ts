// The decoder resumed from an earlier decode must give exactly what decoding from scratch gives: the reference here is the full
// serial decoding of the same keys and choices, run independently of the resumed one.
import { describe, it, expect } from 'vitest'
import { compile, decode, firstChangedPick, type Decoded } from '../../server/scheduler/decode.ts'
import { dispatchKeys } from '../../server/scheduler/search.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { createRng } from '../../server/scheduler/random.ts'

const plain = (d: Decoded) => ({
  start: Array.from(d.start),
  end: Array.from(d.end),
  option: Array.from(d.option),
  segments: d.segments,
  why: Array.from(d.why),
  blocker: Array.from(d.blocker),
  overflow: d.overflow,
  brokenPins: d.brokenPins,
  weightedTardiness: d.weightedTardiness,
  makespan: d.makespan,
  order: Array.from(d.order ?? []),
  readyAt: Array.from(d.readyAt ?? []),
})

/** A generated workshop (40 job bags, work under way) decoded by its first dispatching rule, and a random stream for changes. */
function startOf(seed: number) {
  const c = compile(generateWorkshop({ seed, jobs: 40, withProgress: true }))
  const key = dispatchKeys(c)[0]!,
    choice = new Int32Array(c.n).fill(-1)
  return { c, rng: createRng(seed), key, choice, cur: decode(c, key, choice) }
}

describe('decoder resumed after the picks a change cannot reach', () => {
  it('when keys and choices of a few steps change, then resuming from the first pick where one was ready equals a full decode', () => {
    for (const seed of [3, 4]) {
      const start = startOf(seed)
      const { c, rng } = start
      let { key, choice, cur } = start
      let resumedSomewhere = 0
      for (let round = 0; round < 60; round++) {
        const k2 = key.slice(),
          ch2 = choice.slice()
        const changes = 1 + rng.int(3)
        for (let q = 0; q < changes; q++) {
          const x = rng.int(c.n)
          if (rng.next() < 0.5) k2[x] = k2[x]! - rng.next() * 5000
          else ch2[x] = rng.int(c.options[x]!.length + 1) - 1
        }
        let from = c.n
        for (let i = 0; i < c.n; i++) if (k2[i] !== key[i] || ch2[i] !== choice[i]) from = Math.min(from, cur.readyAt![i]!)
        if (from > 0) resumedSomewhere++
        const resumed = decode(c, k2, ch2, cur, from)
        const full = decode(c, k2, ch2)
        expect(plain(resumed)).toEqual(plain(full))
        // Walk on: the next change starts from this decode, as the search does.
        if (rng.next() < 0.5) {
          key = k2
          choice = ch2
          cur = resumed
        }
      }
      expect(resumedSomewhere).toBeGreaterThan(20)
    }
  })

  it('when keys rise, fall or swap and choices change, then resuming from the first pick that can differ equals a full decode', () => {
    // The changes the planner's search makes: a step put just before another (its key just under the other's), a job bag's keys
    // all lowered, two keys swapped, a key raised, a choice changed. The reference is a full decode of the same keys and choices.
    for (const seed of [5, 6]) {
      const start = startOf(seed)
      const { c, rng } = start
      let { key, choice, cur } = start
      let lateResumes = 0
      for (let round = 0; round < 80; round++) {
        const k2 = key.slice(),
          ch2 = choice.slice()
        const order = cur.order!
        const x = order[rng.int(order.length)]!
        const kind = rng.int(5)
        if (kind === 0) {
          const b = order[rng.int(order.length)]!
          k2[x] = key[b]! - 1e-6
        } else if (kind === 1) {
          for (let i = 0; i < c.n; i++) if (c.jobOf[i] === c.jobOf[x]) k2[i] = key[i]! - 3000
        } else if (kind === 2) {
          const y = order[rng.int(order.length)]!
          k2[x] = key[y]!
          k2[y] = key[x]!
        } else if (kind === 3) k2[x] = key[x]! + rng.next() * 5000
        else ch2[x] = rng.int(c.options[x]!.length + 1) - 1
        const from = firstChangedPick(cur, key, choice, k2, ch2)
        // Never before the first pick at which a changed step was ready (where the search resumed until now).
        let ready = c.n
        for (let i = 0; i < c.n; i++) if (k2[i] !== key[i] || ch2[i] !== choice[i]) ready = Math.min(ready, cur.readyAt![i]!)
        expect(from).toBeGreaterThanOrEqual(ready)
        if (from > ready) lateResumes++
        const full = decode(c, k2, ch2)
        expect(plain(decode(c, k2, ch2, cur, from))).toEqual(plain(full))
        // One step's key lowered: the pick found is exactly where the full decode takes it (the bound is tight, not only safe).
        if (kind === 0 && k2[x]! < key[x]! && from < order.length) expect(full.order![from]).toBe(x)
        if (rng.next() < 0.5) {
          key = k2
          choice = ch2
          cur = full
        }
      }
      expect(lateResumes).toBeGreaterThan(20)
    }
  })
})
