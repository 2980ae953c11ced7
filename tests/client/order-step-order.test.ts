// The order drawer's routing names each step's predecessors by their step names, as people know the work, never by routing key.
import { describe, expect, it } from 'vitest'
import { stepOrderLabel } from '@/components/orders/order-labels'

// The demo's signet ring: cast → file → hallmark → polish → inspect (server/db/seed.ts), with the names its steps carry.
const signet = [
  { key: 'cast', name: 'Cast (caster)', after: [] },
  { key: 'file', name: 'Clean up and size', after: ['cast'] },
  { key: 'hallmark', name: 'Hallmark', after: ['file'] },
  { key: 'polish', name: 'Polish', after: ['hallmark'] },
]
// The halo ring's join follows two steps.
const halo = [
  { key: 'head', name: 'Cast halo head (caster)', after: [] },
  { key: 'shank', name: 'Forge shank', after: [] },
  { key: 'setting', name: 'Set stones', after: [] },
  { key: 'join', name: 'Solder head to shank', after: ['head', 'shank'] },
  { key: 'check', name: 'Check', after: ['head', 'shank', 'setting'] },
]

describe('step order in the order drawer', () => {
  it('when Hallmark follows the step keyed file, then it reads "after Clean up and size", the name that step carries', () => {
    expect(stepOrderLabel(signet[2]!.after, signet)).toBe('after Clean up and size')
    expect(stepOrderLabel(signet[1]!.after, signet)).toBe('after Cast (caster)')
  })

  it('when a step follows two or three others, then their names are listed with "and" before the last', () => {
    expect(stepOrderLabel(halo[3]!.after, halo)).toBe('after Cast halo head (caster) and Forge shank')
    expect(stepOrderLabel(halo[4]!.after, halo)).toBe('after Cast halo head (caster), Forge shank and Set stones')
  })

  it('when a step follows nothing, then it is first; a key with no step of that bag is shown as it is', () => {
    expect(stepOrderLabel(signet[0]!.after, signet)).toBe('first')
    expect(stepOrderLabel(['gone'], signet)).toBe('after gone')
  })
})
