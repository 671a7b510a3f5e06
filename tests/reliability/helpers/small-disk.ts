import { execFileSync } from 'node:child_process'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'

/**
 * A full disk, simulated as SQLite's own I/O-error tests do (sqlite.org/testing.html §3.2): a tmpfs
 * of `sizeKb` when this process may mount one (root in a container), so writes fail with ENOSPC like a
 * real full disk; otherwise null, and the caller falls back to a file-size limit (`ulimit -f`, EFBIG).
 */
export function mountSmallDisk(sizeKb: number): { dir: string; unmount(): void } | null {
  const dir = mkdtempSync(join(tmpdir(), 'pitside-small-disk-'))
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${sizeKb}k`, 'tmpfs', dir], { stdio: 'ignore' })
  } catch {
    rmSync(dir, { recursive: true, force: true })
    return null
  }
  return {
    dir,
    unmount() {
      try {
        execFileSync('umount', [dir], { stdio: 'ignore' })
      } finally {
        rmSync(dir, { recursive: true, force: true })
      }
    },
  }
}

/** The command line that runs `node <args>` under a file-size limit of `limitKb`. */
export function underFileSizeLimit(limitKb: number, args: string[]): [string, string[]] {
  const quoted = args.map((a) => `'${a.replaceAll("'", `'\\''`)}'`).join(' ')
  return ['bash', ['-c', `ulimit -f ${limitKb}; exec node ${quoted}`]]
}
