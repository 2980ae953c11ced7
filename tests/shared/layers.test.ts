// Layers of the server: use cases (services, planning) take no HTTP types and reach nothing in middleware or routes, and the
// environment is read in config.ts alone. Imports and `process.env` are found by the TypeScript compiler's parser, not by text search.
import { readFileSync, readdirSync, statSync } from 'node:fs'
import { join, relative, resolve } from 'node:path'
import ts from 'typescript'
import { describe, expect, it } from 'vitest'

const root = resolve(import.meta.dirname, '../..')

function walk(dir: string, out: string[] = []): string[] {
  for (const name of readdirSync(dir)) {
    const p = join(dir, name)
    if (statSync(p).isDirectory()) walk(p, out)
    else if (name.endsWith('.ts') && !name.endsWith('.d.ts')) out.push(p)
  }
  return out
}
const rel = (f: string) => relative(root, f)

/** Each import of a file, resolved to a repository path when it is the app's own, else the package name. */
function importsOf(file: string): string[] {
  return ts
    .preProcessFile(readFileSync(file, 'utf8'), true, true)
    .importedFiles.map(({ fileName }) => (fileName.startsWith('.') ? rel(resolve(join(file, '..'), fileName)) : fileName))
}

/** Places where `process.env` is read. */
function envReads(file: string): number[] {
  const src = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.ES2022, true)
  const lines: number[] = []
  const visit = (n: ts.Node) => {
    if (ts.isPropertyAccessExpression(n) && n.name.text === 'env' && ts.isIdentifier(n.expression) && n.expression.text === 'process')
      lines.push(src.getLineAndCharacterOfPosition(n.getStart()).line + 1)
    ts.forEachChild(n, visit)
  }
  visit(src)
  return lines
}

describe('server layers', () => {
  it('when a service or planning module is read, then it imports neither express nor anything from middleware or routes', () => {
    const useCases = [...walk(join(root, 'server/services')), ...walk(join(root, 'server/planning'))]
    expect(useCases.length).toBeGreaterThan(10)
    const leaks = useCases.flatMap((f) =>
      importsOf(f)
        .filter((i) => i === 'express' || i.startsWith('server/middleware/') || i.startsWith('server/routes/'))
        .map((i) => `${rel(f)} → ${i}`),
    )
    expect(leaks).toEqual([])
  })

  it('when the server code is read, then the environment is read only in config.ts', () => {
    const reads = walk(join(root, 'server'))
      .filter((f) => rel(f) !== 'server/config.ts')
      .flatMap((f) => envReads(f).map((line) => `${rel(f)}:${line}`))
    expect(reads).toEqual([])
  })
})
