// Ring sizes: ISO 8653 circumference and diameter, the US/Canada formula, and the pinned UK/Australia letter chart.
import { describe, expect, it } from 'vitest'
import {
  UK_LETTER_CHART,
  isoToDiameterMm,
  isoToUk,
  isoToUs,
  ringSizeAll,
  ringSizeToIso,
  ukIndex,
  ukToIso,
  usToDiameterMm,
  usToIso,
} from '../../shared/domain/ring-size'

describe('ISO 8653 and US sizes', () => {
  it('when the ISO size is 54, then the inner diameter is 17.2 mm', () => {
    // BS EN ISO 8653:2014 summary: diameter = size / π, e.g. 54 → 17.2 mm.
    expect(isoToDiameterMm(54)).toBeCloseTo(17.2, 1)
  })

  it('when the US size is 7, then the inner diameter is 17.32 mm and the ISO size about 54.4', () => {
    // US/Canada: inside diameter = 0.458 in + 0.032 in × size; US 7 = 17.32 mm, ISO ≈ 54.4 ("Ring size" reference tables).
    expect(usToDiameterMm(7)).toBeCloseTo(17.32, 2)
    expect(usToIso(7)).toBeCloseTo(54.4, 1)
    expect(isoToUs(usToIso(7))).toBeCloseTo(7, 9)
  })

  it('when a size is typed in any scale, then every scale is shown', () => {
    expect(ringSizeAll({ scale: 'us', value: '7' })).toMatchObject({ iso: 54.4, diameterMm: 17.3, us: 7 })
    expect(ringSizeAll({ scale: 'iso', value: '54' })).toMatchObject({ iso: 54, diameterMm: 17.2 })
    expect(ringSizeAll({ scale: 'uk', value: 'n 1/2' })).toMatchObject({ uk: 'N½', iso: 54.4 })
  })

  it('when a value is not a size of its scale, then it is refused', () => {
    expect(ringSizeToIso({ scale: 'uk', value: 'ZZ' })).toBeNull()
    expect(ringSizeToIso({ scale: 'us', value: '40' })).toBeNull()
    expect(ringSizeToIso({ scale: 'iso', value: 'abc' })).toBeNull()
  })
})

// The pinned chart, as published: just-color.com "Ring Size Chart" (2021), US & Canada column against the UK & Aus. column,
// A to P (the rows of the older Wikipedia "Ring size" conversion chart). Each UK letter with its US size on the same row.
const PUBLISHED_UK_US: [string, number][] = [
  ['A', 0.5],
  ['A½', 0.75],
  ['B', 1],
  ['B½', 1.25],
  ['C', 1.5],
  ['C½', 1.75],
  ['D', 2],
  ['D½', 2.25],
  ['E', 2.5],
  ['E½', 2.75],
  ['F', 3],
  ['F½', 3.25],
  ['G', 3.5],
  ['G½', 3.75],
  ['H', 4],
  ['H½', 4.25],
  ['I', 4.5],
  ['J', 4.75],
  ['J½', 5],
  ['K', 5.25],
  ['K½', 5.5],
  ['L', 5.75],
  ['L½', 6],
  ['M', 6.25],
  ['M½', 6.5],
  ['N', 6.75],
  ['N½', 7],
  ['O', 7.25],
  ['O½', 7.5],
  ['P', 7.75],
]

describe('UK / Australia letters', () => {
  it.each(PUBLISHED_UK_US)('when the chart puts UK %s beside US %s, then the US formula’s circumference gives that letter within ½ letter', (letter, us) => {
    // The sheet's tolerance: ±½ letter (UK letters differ between charts).
    const got = isoToUk(usToIso(us))
    expect(got).not.toBeNull()
    expect(Math.abs(ukIndex(got!) - ukIndex(letter))).toBeLessThanOrEqual(1)
  })

  it.each(UK_LETTER_CHART.map(([l, c]) => [l, c] as const))(
    'when UK %s is entered, then its circumference %s mm reads back as the same letter',
    (letter, circ) => {
      expect(ukToIso(letter)).toBe(circ)
      expect(isoToUk(circ)).toBe(letter)
    },
  )

  it('when every letter of the chart past P is checked against the US formula, then each lies within ½ letter of a quarter US size', () => {
    // From memory beyond P (one half letter per quarter US size): each circumference should be within half a step (0.32 mm) of π × 25.4 × (0.458 + 0.032 × us) for a quarter size.
    for (const [, circ] of UK_LETTER_CHART) {
      const us = Math.round(isoToUs(circ) * 4) / 4
      expect(Math.abs(usToIso(us) - circ)).toBeLessThan(0.32)
    }
  })
})
