import SQLite from 'better-sqlite3'
import { fork, type ChildProcess } from 'node:child_process'
import { fileURLToPath } from 'node:url'

const writerScript = fileURLToPath(new URL('./writer.mjs', import.meta.url))

/**
 * Starts tests/reliability/helpers/writer.mjs against `file` and resolves once it has opened the database.
 * `count` 0 writes until killed.
 */
export async function startWriter(file: string, { count = 0, size = 20, pauseMs = 0, keep = 0 } = {}): Promise<ChildProcess> {
  const child = fork(writerScript, [file, String(count), String(size), String(pauseMs), String(keep)], { stdio: ['ignore', 'pipe', 'inherit', 'ipc'] })
  await new Promise<void>((resolve, reject) => {
    child.once('message', () => resolve())
    child.once('exit', (code) => reject(new Error(`writer exited early with ${code}`)))
  })
  return child
}

export async function stopWriter(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null) return
  await new Promise<void>((resolve) => {
    child.once('exit', () => resolve())
    child.kill('SIGTERM')
  })
}

/**
 * What the writer has committed in `file`: the number of batches present, the newest one, and a list
 * of reasons the file is not one committed state (a batch with missing farms, a gap in the batch
 * numbers, stray farms). The list is empty when it is consistent.
 */
export function writerState(file: string, size = 20): { batches: number; last: number; problems: string[] } {
  const sqlite = new SQLite(file, { readonly: true, fileMustExist: true })
  try {
    const runs = (
      sqlite.prepare(`select file_name from import_runs where kind = 'writer-test'`).all() as { file_name: string }[]
    ).map((r) => Number(r.file_name.slice('batch-'.length)))
    const farms = sqlite
      .prepare(`select substr(code, 2, instr(code, '-') - 2) as k, count(*) as n from farms where code like 'B%-%' group by k`)
      .all() as { k: string; n: number }[]
    const problems: string[] = []
    const ks = new Set(runs)
    runs.sort((a, b) => a - b).forEach((k, i) => {
      if (i > 0 && k !== runs[i - 1]! + 1) problems.push(`batches ${runs[i - 1]! + 1}..${k - 1} missing before batch ${k}`)
    })
    const counted = new Map(farms.map((f) => [Number(f.k), f.n]))
    for (const k of ks) if (counted.get(k) !== size) problems.push(`batch ${k} has ${counted.get(k) ?? 0} farms, not ${size}`)
    for (const k of counted.keys()) if (!ks.has(k)) problems.push(`farms of batch ${k} without its import run`)
    return { batches: runs.length, last: runs.length ? runs[runs.length - 1]! : 0, problems }
  } finally {
    sqlite.close()
  }
}
