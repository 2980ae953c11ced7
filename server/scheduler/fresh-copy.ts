// A search run on a fresh copy of its own code for each call.
//
// V8 specialises a function's optimised code on the variables it closes over only while one closure of it exists. The searches in
// `shop-core.ts` and `pair-core.ts` are one function each whose inner functions (timing a candidate above all) close over the
// shop's typed arrays; from a process's second search on, those inner functions had many closures and their code ran about 1.6
// times slower (la11 with due dates, 10,000 iterations: 1.6–1.8 s as the first search in a process against 2.5–2.9 s after
// another). A planning worker kept warm between runs, a workshop solve (one search per stage) and a benchmark run over many
// instances all ran every search but the first at that speed. Compiling the function's text again gives new function objects
// for V8, so each call starts with one closure of each again; parsing and compiling it takes about a millisecond.

/**
 * Returns a function that calls a fresh copy of `fn`. `outside` holds every name the function's text uses from its module (a copy
 * made from its text sees no module scope). Before the first copy is used, `check` runs with one copy and must return true; when
 * it throws or returns false (a module transform that renamed something, a missing name), every call uses `fn` itself; so does a
 * call whose copy meets a name that is not there (a ReferenceError), and every call after it. `copying()` tells which.
 */
export function freshCopies<F extends (...args: never[]) => unknown>(
  fn: F,
  outside: Record<string, unknown>,
  check: (copy: F) => boolean,
): F & { copying: () => boolean | null } {
  // Helper some TypeScript transforms wrap named functions in (it names them for stack traces).
  const names = { __name: <T>(f: T): T => f, ...outside }
  const text = fn.toString()
  let made = 0
  let usable: boolean | null = null
  const copy = (): F => {
    // The comment makes each text distinct, so V8's cache of compiled code does not hand back an earlier copy.
    const make = new Function(...Object.keys(names), `return (${text})\n// copy ${++made}`) as (...values: unknown[]) => F
    return make(...Object.values(names))
  }
  const run = (...args: Parameters<F>) => {
    if (usable === null) {
      try {
        usable = check(copy())
      } catch {
        usable = false
      }
    }
    if (!usable) return fn(...args)
    try {
      return copy()(...args)
    } catch (e) {
      // A name the self-check did not reach (a branch it does not take) is missing from `outside`: the call is made again with
      // the function itself (a search's deadline is absolute, so it gets what is left), and so is every call after it.
      if (!(e instanceof ReferenceError)) throw e
      usable = false
      return fn(...args)
    }
  }
  /** Whether calls run on copies (null until the first call). */
  return Object.assign(run, { copying: () => usable }) as unknown as F & { copying: () => boolean | null }
}
