// The reasons the shared schemas give where a rule names none: a form shows them under the field, so they read as plain words
// ("must be at most 500"), never zod's own ("Too big: expected number to be <=500"). Each expected reason is written by hand.
import { describe, expect, it } from 'vitest'
import { z } from 'zod'
import { pieceParams } from '../../shared/schemas/order'

const reasons = (r: { error?: z.ZodError }) => Object.fromEntries((r.error?.issues ?? []).map((i) => [i.path.join('.'), i.message]))

describe('plain reasons from the shared schemas', () => {
  it('when a piece asks 600 pieces, 2.5 stones, −1 mm and no quantity, then each figure says its limit or what it must be, in the schema’s words where it has them', () => {
    expect(reasons(pieceParams.safeParse({ quantity: 600, stoneCount: 2.5, sizeMm: -1 }))).toEqual({
      quantity: 'must be at most 500',
      stoneCount: 'must be a whole number',
      sizeMm: 'must be at least 0',
    })
    // An emptied number field hands on null.
    expect(reasons(pieceParams.safeParse({ quantity: null }))).toEqual({ quantity: 'is required' })
    // A rule that names its own reason keeps it.
    expect(reasons(pieceParams.safeParse({ quantity: 1, stoneCount: 2400 }))).toEqual({ stoneCount: 'must be at most 2000' })
  })

  it('when a bound is strict, then the reason says "more than" or "less than"', () => {
    const s = z.object({ weight: z.number().positive(), share: z.number().lt(1) })
    expect(reasons(s.safeParse({ weight: 0, share: 1 }))).toEqual({ weight: 'must be more than 0', share: 'must be less than 1' })
  })
})
