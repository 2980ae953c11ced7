// What a user does to a form in the client tests: types into a field and leaves it, presses a button (so the browser's own
// check of the form runs, as it does for a person), and reads the reason shown under a field.
import { flushPromises } from '@vue/test-utils'
import { expect } from 'vitest'

const byTest = (test: string) => `[data-test=${test}]`

/** Types into an input (a CSS selector of the input itself) and leaves it, as a user does. */
export async function typeIntoInput(selector: string, text: string): Promise<HTMLInputElement> {
  const input = document.body.querySelector<HTMLInputElement>(selector)
  expect(input, `${selector} is on the page`).not.toBeNull()
  input!.value = text
  input!.dispatchEvent(new Event('input'))
  input!.dispatchEvent(new Event('change'))
  input!.dispatchEvent(new FocusEvent('blur'))
  await flushPromises()
  return input!
}

/** Types into the field marked `data-test=test` (its input inside) and leaves it. */
export const typeInto = (test: string, text: string) => typeIntoInput(`${byTest(test)} input`, text)

/** Presses the button marked `data-test=test` as a user does, then waits for the reasons to come in with the fields' transition. */
export async function press(test: string) {
  const button = document.body.querySelector<HTMLButtonElement>(byTest(test))
  expect(button, `${test} is on the page`).not.toBeNull()
  expect(button!.disabled, `${test} is enabled`).toBe(false)
  button!.click()
  await flushPromises()
  await new Promise((r) => setTimeout(r, 100))
  await flushPromises()
}

/** The reason shown under the form item holding `data-test=test`, or null when there is none. */
export const errorUnder = (test: string): string | null =>
  document.body.querySelector(byTest(test))?.closest('.el-form-item')?.querySelector('.el-form-item__error')?.textContent?.trim() ?? null
