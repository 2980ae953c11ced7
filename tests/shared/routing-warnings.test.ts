// Routing warnings: steps free to start while outside work is away, and steps nothing connects (hand-worked graphs).
import { describe, expect, it } from 'vitest'
import { routingWarnings, type WarningStep } from '../../shared/domain/routing-warnings'

// Kind 1 is bench work, kind 9 outside work (casting, hallmarking).
const OUT = 9
const isOutside = (kindId: number) => kindId === OUT
const step = (key: string, after: string[] = [], kindId = 1, name = ''): WarningStep => ({ key, name, kindId, after })

describe('routing warnings', () => {
  it('when the clean-up after casting follows nothing, then it is warned about and so is the casting nothing connects', () => {
    // Hand-worked: cast is away with no step after it; clean → post → pack is a chain of its own.
    const steps = [step('cast', [], OUT, 'Cast tree'), step('clean', [], 1, 'Cut off and clean'), step('post', ['clean']), step('pack', ['post'])]
    const w = routingWarnings(steps, isOutside)
    expect(w.map((x) => x.code)).toEqual(['starts-while-away', 'not-connected'])
    expect(w[0]).toMatchObject({ step: 'clean', outside: ['cast'] })
    expect(w[0]!.message).toMatch(/“Cut off and clean” comes after no step.*while “Cast tree” is still out/)
    expect(w[1]).toMatchObject({ steps: ['cast'] })
    expect(w[1]!.message).toMatch(/“Cast tree” is not connected/)
  })

  it('when the clean-up follows the casting, then there is nothing to warn about', () => {
    const steps = [step('cast', [], OUT), step('clean', ['cast']), step('post', ['clean']), step('hallmark', ['post'], OUT), step('pack', ['hallmark'])]
    expect(routingWarnings(steps, isOutside)).toEqual([])
  })

  it('when a bench branch starts beside the casting and the two meet at a later step, then it is taken as meant', () => {
    // Halo ring shape: head cast outside while the shank is forged; the solder joins them.
    const steps = [step('head', [], OUT), step('shank'), step('join', ['head', 'shank']), step('polish', ['join'])]
    expect(routingWarnings(steps, isOutside)).toEqual([])
  })

  it('when steps start side by side with no outside work before them, then there is no warning', () => {
    const steps = [step('laminate'), step('bail'), step('pierce', ['laminate']), step('solder', ['pierce', 'bail'])]
    expect(routingWarnings(steps, isOutside)).toEqual([])
  })

  it('when the step that follows nothing is listed before the outside work, then it is not warned about (only what is listed after)', () => {
    const steps = [step('shank'), step('head', [], OUT), step('join', ['head', 'shank'])]
    expect(routingWarnings(steps, isOutside)).toEqual([])
  })

  it('when a second outside step follows nothing after a first, then it is warned about too (sent to assay before it is made)', () => {
    const steps = [step('cast', [], OUT), step('file', ['cast']), step('hallmark', [], OUT), step('polish', ['hallmark'])]
    const w = routingWarnings(steps, isOutside)
    expect(w.find((x) => x.code === 'starts-while-away')).toMatchObject({ step: 'hallmark', outside: ['cast'] })
    // cast → file and hallmark → polish are two parts of two steps each; the one holding the last step is the routing.
    expect(w.find((x) => x.code === 'not-connected')).toMatchObject({ steps: ['cast', 'file'] })
  })

  it('when two groups of bench steps are not linked, then the smaller group is named as not connected', () => {
    const steps = [step('a'), step('b', ['a']), step('c', ['b']), step('x'), step('y', ['x'])]
    const w = routingWarnings(steps, isOutside)
    expect(w).toHaveLength(1)
    expect(w[0]).toMatchObject({ code: 'not-connected', steps: ['x', 'y'] })
    expect(w[0]!.message).toBe('“x” and “y” are not connected to the other steps of the routing.')
  })

  it('when a routing has one step, or a link names an unknown step, then there is no warning (validation reports unknown links)', () => {
    expect(routingWarnings([step('only', [], OUT)], isOutside)).toEqual([])
    expect(routingWarnings([step('a'), step('b', ['a', 'ghost'])], isOutside)).toEqual([])
  })

  it('when the steps run in a circle, then it still answers (the circle is validation’s to report)', () => {
    expect(() => routingWarnings([step('a', ['b']), step('b', ['a']), step('c', [], OUT)], isOutside)).not.toThrow()
  })
})
