// The import graph of the app's own code has no cycles: each module can be read (and changed) after the ones it uses.
// Imports are found and resolved by the TypeScript compiler's own API (ts.preProcessFile, ts.resolveModuleName), not by
// pattern matching here; .vue files contribute their <script> blocks.
import { readFileSync, readdirSync, statSync } from 'node:fs'
import { join, relative, resolve } from 'node:path'
import ts from 'typescript'
import { describe, expect, it } from 'vitest'

const root = resolve(import.meta.dirname, '../..')
const ROOTS = ['server', 'shared', 'src']

function walk(dir: string, out: string[] = []): string[] {
  for (const name of readdirSync(dir)) {
    const p = join(dir, name)
    if (statSync(p).isDirectory()) walk(p, out)
    else if (/\.(ts|vue)$/.test(name) && !name.endsWith('.d.ts')) out.push(p)
  }
  return out
}

const scriptOf = (file: string) => {
  const text = readFileSync(file, 'utf8')
  if (!file.endsWith('.vue')) return text
  return [...text.matchAll(/<script[^>]*>([\s\S]*?)<\/script>/g)].map((m) => m[1]).join('\n')
}

const options: ts.CompilerOptions = {
  module: ts.ModuleKind.ESNext,
  moduleResolution: ts.ModuleResolutionKind.Bundler,
  allowImportingTsExtensions: true,
  baseUrl: root,
  paths: { '@/*': ['src/*'], '@shared/*': ['shared/*'] },
}
const host: ts.ModuleResolutionHost = { fileExists: ts.sys.fileExists, readFile: ts.sys.readFile }

function graph(): Map<string, string[]> {
  const files = ROOTS.flatMap((r) => walk(join(root, r)))
  const known = new Set(files)
  const edges = new Map<string, string[]>()
  for (const file of files) {
    const imports = ts.preProcessFile(scriptOf(file), true, true).importedFiles.map((f) => f.fileName)
    const to: string[] = []
    for (const spec of imports) {
      let target: string | undefined
      if (spec.endsWith('.vue')) target = spec.startsWith('@/') ? join(root, 'src', spec.slice(2)) : resolve(file, '..', spec)
      else target = ts.resolveModuleName(spec, file, options, host).resolvedModule?.resolvedFileName
      if (target && known.has(target)) to.push(target)
    }
    edges.set(file, to)
  }
  return edges
}

/** Cycles as strongly connected components of more than one module (Tarjan), or a module importing itself. */
function cycles(edges: Map<string, string[]>): string[][] {
  let index = 0
  const idx = new Map<string, number>(),
    low = new Map<string, number>(),
    stack: string[] = [],
    on = new Set<string>(),
    out: string[][] = []
  const visit = (v: string): void => {
    idx.set(v, index)
    low.set(v, index)
    index++
    stack.push(v)
    on.add(v)
    for (const w of edges.get(v) ?? []) {
      if (!idx.has(w)) {
        visit(w)
        low.set(v, Math.min(low.get(v)!, low.get(w)!))
      } else if (on.has(w)) low.set(v, Math.min(low.get(v)!, idx.get(w)!))
    }
    if (low.get(v) === idx.get(v)) {
      const scc: string[] = []
      let w: string
      do {
        w = stack.pop()!
        on.delete(w)
        scc.push(w)
      } while (w !== v)
      if (scc.length > 1 || (edges.get(v) ?? []).includes(v)) out.push(scc.map((f) => relative(root, f)).sort())
    }
  }
  for (const v of edges.keys()) if (!idx.has(v)) visit(v)
  return out
}

describe('import graph', () => {
  it('when the compiler resolves every import of server/, shared/ and src/, then no module reaches itself again', () => {
    const edges = graph()
    // The walk must have found the app: a broken resolver would see no edges and pass for the wrong reason.
    expect(edges.size).toBeGreaterThan(300)
    expect([...edges.values()].reduce((n, e) => n + e.length, 0)).toBeGreaterThan(1000)
    expect(edges.get(join(root, 'server/services/bench-floor.ts'))).toContain(join(root, 'server/services/job-bag-state.ts'))
    expect(cycles(edges)).toEqual([])
  })

  it("when the stores' imports are resolved, then none is a component or a view (pure helpers live in src/lib)", () => {
    const edges = graph()
    const stores = [...edges.keys()].filter((f) => relative(root, f).startsWith('src/stores/'))
    expect(stores.length).toBeGreaterThan(10)
    const ui = stores.flatMap((f) =>
      (edges.get(f) ?? [])
        .map((t) => relative(root, t))
        .filter((t) => t.startsWith('src/components/') || t.startsWith('src/views/'))
        .map((t) => `${relative(root, f)} → ${t}`),
    )
    expect(ui).toEqual([])
  })

  it('when two modules import each other, then the check reports them (the checker itself can fail)', () => {
    const a = '/x/a.ts',
      b = '/x/b.ts',
      c = '/x/c.ts'
    expect(
      cycles(
        new Map([
          [a, [b]],
          [b, [a, c]],
          [c, []],
        ]),
      ).map((s) => s.length),
    ).toEqual([2])
  })
})
