// Benchmark readers: OR-Library job shop and Brandimarte/Kacem flexible job shop, 0- and 1-based machines.
import { describe, it, expect } from 'vitest'
import { parseFlexibleJobShop, parseJobShop, parseShopFile, shopToProblem } from '../../server/scheduler/formats.ts'
import { checkProblem } from '../../server/scheduler/index.ts'

describe('benchmark formats', () => {
  it('when a .jss file has comments and two jobs, then every operation is read in order', () => {
    const f = parseJobShop('# tiny\n# more\n2 2\n0 3 1 2\n1 4 0 1\n')
    expect(f.jobs).toEqual([
      [[{ machine: 0, duration: 3 }], [{ machine: 1, duration: 2 }]],
      [[{ machine: 1, duration: 4 }], [{ machine: 0, duration: 1 }]],
    ])
    expect(f.machineBase).toBe(0)
  })
  it('when a .fjs file lists alternatives, then each operation keeps all of them', () => {
    const f = parseFlexibleJobShop('2 2 1.5\n2 2 0 3 1 4 1 1 2\n1 1 0 5\n')
    expect(f.jobs[0]).toEqual([
      [
        { machine: 0, duration: 3 },
        { machine: 1, duration: 4 },
      ],
      [{ machine: 1, duration: 2 }],
    ])
    expect(f.jobs[1]).toEqual([[{ machine: 0, duration: 5 }]])
  })
  it('when machines are numbered from 1, then this is detected and kept for output', () => {
    const f = parseFlexibleJobShop('1 2\n2 1 1 3 1 2 4\n')
    expect(f.machineBase).toBe(1)
    const p = shopToProblem(f)
    expect(p.benches.map((b) => b.id)).toEqual(['m1', 'm2'])
    expect(() => checkProblem(p)).not.toThrow()
  })
  it('when the extension is unknown, then the format is guessed from the text', () => {
    expect(parseShopFile('x.txt', '1 2\n0 1 1 1\n').kind).toBe('jssp')
    expect(parseShopFile('x.txt', '1 2 1\n1 2 0 1 1 1\n').kind).toBe('fjsp')
  })
  it('when a file is truncated, then reading fails with a clear message', () => {
    expect(() => parseJobShop('2 2\n0 3 1 2\n')).toThrow(/job 1/)
  })
})
