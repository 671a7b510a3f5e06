/**
 * Expected failures that cross an edge (CLI or server). Each code maps to one exit code in
 * cli/main.ts and one HTTP status in server/errors.ts. Messages are written for the user:
 * what was expected, what was found, and where.
 */
export type ErrorCode =
  | 'usage' // bad flags or arguments
  | 'invalid_input' // a file or value the user gave is wrong
  | 'not_found' // a farm, plan or file that does not exist
  | 'conflict' // the request contradicts what is stored
  | 'unauthorized' // not signed in, bad credentials, bad token
  | 'forbidden' // signed in but not allowed
  | 'rate_limited'
  | 'io' // a file could not be read or written, disk full
  | 'database' // the database is missing, locked, corrupt or too new
  | 'config' // environment or configuration is wrong

export class AppError extends Error {
  readonly code: ErrorCode
  readonly details?: unknown
  constructor(code: ErrorCode, message: string, details?: unknown) {
    super(message)
    this.name = 'AppError'
    this.code = code
    this.details = details
  }
}

export function isAppError(value: unknown): value is AppError {
  return value instanceof AppError
}

/** A problem found in data: a value, not an exception. `line` is 1-based in the source file. */
export interface Problem {
  code: string
  message: string
  line?: number
  column?: string
  path?: (string | number)[]
  severity?: 'error' | 'warning'
}

/** Formats problems as `file:line: column: reason`, one per line. */
export function formatProblems(problems: readonly Problem[], file?: string): string {
  return problems
    .map((p) => {
      const where = [file, p.line].filter((x) => x !== undefined && x !== '').join(':')
      const column = p.column ? `${p.column}: ` : p.path && p.path.length ? `${p.path.join('.')}: ` : ''
      return `${where ? where + ': ' : ''}${column}${p.message}`
    })
    .join('\n')
}
