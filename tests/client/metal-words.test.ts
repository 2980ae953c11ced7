// The job bag's list of weighings in words: out, back, and the piece leaving with its collected order.
import { describe, expect, it } from 'vitest'
import { alloyForPieceMetal, movementWords } from '@/components/metal/metal-format'
import type { Alloy } from '@shared/schemas/metal'

describe('a job bag’s weighings in words', () => {
  it('when the piece has left with its collected order, then its row says so instead of the stored kind', () => {
    expect(movementWords({ kind: 'delivered', source: null, form: null })).toBe('went to the customer') // collected with its order, or handed back
  })
  it('when metal goes out and comes back, then the rows say where from and in what form', () => {
    expect(movementWords({ kind: 'issued', source: 'stock', form: null })).toBe('out from stock')
    expect(movementWords({ kind: 'issued', source: 'customer', form: null })).toBe('out (customer’s own)')
    expect(movementWords({ kind: 'returned', source: null, form: 'lemel' })).toBe('back as lemel')
  })
  it('when the customer’s piece was handed back 0.052 g lighter or 0.008 g heavier than held, then the row says their metal lost or gained', () => {
    expect(movementWords({ kind: 'customer-loss', source: null, form: null, effectiveMg: 52 })).toBe('lost from the customer’s metal as handed back')
    expect(movementWords({ kind: 'customer-loss', source: null, form: null, effectiveMg: -8 })).toBe('gained by the customer’s metal as handed back')
  })
})

describe('the alloy preselected for weighing a piece', () => {
  const alloy = (id: number, name: string, metal: Alloy['metal'], fineness: number, active = true): Alloy => ({
    id,
    code: `a${id}`,
    name,
    metal,
    fineness,
    densityGPerCm3: 15,
    active,
    version: 1,
    pricePerGramMinor: null,
    priceOn: null,
  })
  // Listed as the workshop's alloys come (by metal, fineness, name): white before yellow.
  const alloys = [
    alloy(1, '18 ct rose gold', 'gold', 750),
    alloy(2, '18 ct white gold', 'gold', 750),
    alloy(3, '18 ct yellow gold', 'gold', 750),
    alloy(4, 'Sterling silver', 'silver', 925),
    alloy(5, '9 ct yellow gold (old stock)', 'gold', 375, false),
    alloy(6, '9 ct red gold', 'gold', 375),
  ]
  it('when an 18 ct gold piece has not been weighed yet, then the yellow 18 ct is chosen, not the first by name', () => {
    expect(alloyForPieceMetal(alloys, 'gold-18ct')?.name).toBe('18 ct yellow gold')
  })
  it('when the bag was last weighed in rose gold, then rose gold is chosen for its next weighing', () => {
    expect(alloyForPieceMetal(alloys, 'gold-18ct', 1)?.name).toBe('18 ct rose gold')
  })
  it('when the only yellow of that fineness is no longer in use, then an active one of it is chosen; silver has one', () => {
    expect(alloyForPieceMetal(alloys, 'gold-9ct')?.name).toBe('9 ct red gold')
    expect(alloyForPieceMetal(alloys, 'silver-925')?.name).toBe('Sterling silver')
    expect(alloyForPieceMetal(alloys, 'unknown-metal')).toBeNull()
  })
})
