// The job bag's list of weighings in words: out, back, and the piece leaving with its collected order.
import { describe, expect, it } from 'vitest'
import { movementWords } from '@/components/metal/metal-format'

describe('a job bag’s weighings in words', () => {
  it('when the piece has left with its collected order, then its row says so instead of the stored kind', () => {
    expect(movementWords({ kind: 'delivered', source: null, form: null })).toBe('left with its order')
  })
  it('when metal goes out and comes back, then the rows say where from and in what form', () => {
    expect(movementWords({ kind: 'issued', source: 'stock', form: null })).toBe('out from stock')
    expect(movementWords({ kind: 'issued', source: 'customer', form: null })).toBe('out (customer’s own)')
    expect(movementWords({ kind: 'returned', source: null, form: 'lemel' })).toBe('back as lemel')
  })
})
