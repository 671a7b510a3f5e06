import { AppError } from '../errors.ts'

/**
 * Turns an error thrown by better-sqlite3 into an AppError with a message for the user, or returns
 * null when it is not one SQLite raises for an outside cause (disk full, I/O, lock, corrupt file,
 * read-only file). `what` names the operation: "cannot write backup.db".
 */
export function appErrorFromSqlite(error: unknown, what: string): AppError | null {
  const code = (error as { code?: unknown })?.code
  if (typeof code !== 'string' || !code.startsWith('SQLITE_')) return null
  const base = code.split('_').slice(0, 2).join('_') // SQLITE_IOERR_WRITE → SQLITE_IOERR
  switch (base) {
    case 'SQLITE_FULL':
      return new AppError('io', `${what}: the disk is full (free some space and try again; nothing was written)`)
    case 'SQLITE_IOERR':
      // a file-size limit (EFBIG) or a failing disk; a plain full disk is SQLITE_FULL
      return new AppError('io', `${what}: the disk refused the write (${code}): it may be full or failing; nothing was written`)
    case 'SQLITE_BUSY':
    case 'SQLITE_LOCKED':
      return new AppError('database', `${what}: the database is locked by another process; try again when it has finished`)
    case 'SQLITE_CORRUPT':
    case 'SQLITE_NOTADB':
      return new AppError('database', `${what}: the file is not a sound SQLite database (${code}); restore it from a backup`)
    case 'SQLITE_READONLY':
      return new AppError('io', `${what}: the file is read-only (${code})`)
    case 'SQLITE_CANTOPEN':
      return new AppError('io', `${what}: the file cannot be opened (${code})`)
    default:
      return null
  }
}
