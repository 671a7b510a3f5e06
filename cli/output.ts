import Table from 'cli-table3'
import type { GlobalOptions } from './globals.ts'

/** Human notes go to stderr (silenced by --quiet); results go to stdout. */
export function note(g: GlobalOptions, message: string): void {
  if (!g.quiet) process.stderr.write(message + '\n')
}

export function printJson(value: unknown): void {
  process.stdout.write(JSON.stringify(value, null, 2) + '\n')
}

export interface Column<T> {
  header: string
  value: (row: T) => string | number | null | undefined
  align?: 'left' | 'right'
}

/** A plain table without colour codes; numbers right-aligned. */
export function formatTable<T>(rows: readonly T[], columns: readonly Column<T>[]): string {
  const table = new Table({
    head: columns.map((c) => c.header),
    style: { head: [], border: [] },
    // no rule between body rows: long tables stay readable in a terminal and in a pasted e-mail
    chars: { mid: '', 'left-mid': '', 'mid-mid': '', 'right-mid': '' },
    colAligns: columns.map((c) => c.align ?? 'left'),
  })
  for (const row of rows) {
    table.push(columns.map((c) => {
      const v = c.value(row)
      return v === null || v === undefined ? '' : String(v)
    }))
  }
  return table.toString()
}

export function printTable<T>(rows: readonly T[], columns: readonly Column<T>[]): void {
  process.stdout.write(formatTable(rows, columns) + '\n')
}
