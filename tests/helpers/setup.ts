import { afterEach, beforeEach, vi } from 'vitest'

// A test fails on an unexpected console.error: errors belong in return values or AppErrors.
let errors: unknown[][] = []
beforeEach(() => {
  errors = []
  vi.spyOn(console, 'error').mockImplementation((...args: unknown[]) => {
    errors.push(args)
  })
})
afterEach(() => {
  vi.restoreAllMocks()
  if (errors.length > 0) {
    const first = errors[0]!.map(String).join(' ')
    errors = []
    throw new Error(`unexpected console.error: ${first}`)
  }
})
