import { close, fstat, open, read, statSync, type Stats } from 'node:fs'
import { newLabWriterThread, labWriteWorkerBuilt, type LabWriterThread } from '../shared/db/lab-writer-thread.ts'
import { programOptionsWithValue } from './program-options.ts'

/**
 * Work a command is about to need, started before the program's own modules are loaded (bin/
 * pitside.js calls startEarly first; loading them takes some 0.1 s). For `pitside labs import
 * FILE…` with a big first file, that file is read on Node's thread pool and the lab writer thread
 * starts, both beside the loading, instead of one after the other. The command takes them
 * (takeEarlyRead, takeEarlyLabWriter) or ignores them: they are a guess from the raw arguments,
 * checked when taken, and a wrong guess costs one read. Nothing here writes or reports anything.
 */

/** From this size on a file is worth reading early (the size at which a writer thread is used). */
const earlyFromBytes = 1024 * 1024

/** Options of the program and of `labs import` that take a value (the value is not a file). */
const withValue = new Set([...programOptionsWithValue, '--profile', '--reference'])

interface EarlyRead {
  path: string
  /** the bytes, in shared memory, and the file's identity while they were read; null when the read failed */
  done: Promise<{ bytes: Buffer; stat: Stats } | null>
}

let earlyRead: EarlyRead | null = null
let earlyWriter: LabWriterThread | null = null
/** the bytes of the early read, once handed to the early writer thread to hash */
let hashedBytes: Buffer | null = null

/** The first file of a `labs import` command line, or null for any other command. */
export function labImportFirstFile(args: readonly string[]): string | null {
  const words: string[] = []
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!
    if (a === '--') {
      words.push(...args.slice(i + 1))
      break
    }
    if (withValue.has(a)) i++
    else if (!a.startsWith('-') || a === '-') words.push(a)
  }
  if (words[0] !== 'labs' || words[1] !== 'import') return null
  const file = words[2]
  return file === undefined || file === '-' ? null : file
}

/** Starts what the command line will need (see above). Never throws. */
export function startEarly(args: readonly string[]): void {
  try {
    const path = labImportFirstFile(args)
    if (!path) return
    let size: number
    try {
      const stat = statSync(path)
      if (!stat.isFile()) return
      size = stat.size
    } catch {
      return // the command reports it
    }
    if (size < earlyFromBytes) return
    earlyRead = { path, done: readWhole(path) }
    if (labWriteWorkerBuilt()) {
      const writer = (earlyWriter = newLabWriterThread())
      // the thread hashes the bytes once they are read, while this one loads the program (the
      // first pass over fresh memory is slow here: the command's own check of the bytes is then
      // quick); the command asks for the hash (SpareLabWriter.sha256) when it has the bytes
      void earlyRead.done.then((got) => {
        if (!got) return
        const bytes = got.bytes
        writer.worker.postMessage({ type: 'prehash', buffer: bytes.buffer as SharedArrayBuffer, offset: bytes.byteOffset, length: bytes.length })
        hashedBytes = bytes
      })
    }
  } catch {
    // a guess that failed: the command does it all itself
  }
}

/** Parts of a file read at the same time: copying it into fresh memory is most of a read's time here, and it is split between cores. */
const readParts = 2

/** Reads a whole file into shared memory on the thread pool; null on any failure (the command reads it again and reports). */
function readWhole(path: string): Promise<{ bytes: Buffer; stat: Stats } | null> {
  return new Promise((resolve) => {
    open(path, 'r', (error, fd) => {
      if (error) return resolve(null)
      const finish = (result: { bytes: Buffer; stat: Stats } | null) => close(fd, () => resolve(result))
      fstat(fd, (error, stat) => {
        if (error) return finish(null)
        const bytes = Buffer.from(new SharedArrayBuffer(stat.size))
        const part = Math.ceil(stat.size / readParts)
        let reading = readParts
        let failed = false
        const partDone = (ok: boolean) => {
          failed ||= !ok
          if (--reading === 0) finish(failed ? null : { bytes, stat })
        }
        // each part in its own sequence of reads, all parts at once
        const step = (at: number, end: number) => {
          if (at === end) return partDone(true)
          read(fd, bytes, at, end - at, at, (error, n) => {
            if (error || n === 0) return partDone(false) // shrank while read: read it again
            step(at + n, end)
          })
        }
        for (let i = 0; i < readParts; i++) step(Math.min(stat.size, i * part), Math.min(stat.size, (i + 1) * part))
      })
    })
  })
}

/**
 * The bytes of `path` read early, when they were read from the same file as `path` names now
 * (same device, inode, size and modification time); null otherwise. Taken once.
 */
export async function takeEarlyRead(path: string): Promise<Buffer | null> {
  const early = earlyRead
  if (!early || early.path !== path) return null
  earlyRead = null
  const got = await early.done
  if (!got) return null
  let now: Stats
  try {
    now = statSync(path)
  } catch {
    return null
  }
  const same = now.dev === got.stat.dev && now.ino === got.stat.ino && now.size === got.stat.size && now.mtimeMs === got.stat.mtimeMs
  return same ? got.bytes : null
}

/**
 * Whether these are the bytes of the early read, handed to the early writer thread to hash (ask it
 * with `SpareLabWriter.sha256(bytes, true)`; a thread that did not get them hashes them then).
 */
export function hashedEarly(bytes: Uint8Array): boolean {
  return hashedBytes !== null && bytes === hashedBytes
}

/** The writer thread started early, if any. Taken once; the taker ends it when it does not use it. */
export function takeEarlyLabWriter(): LabWriterThread | null {
  const thread = earlyWriter
  earlyWriter = null
  return thread
}
