import { createHash } from 'node:crypto'
import { closeSync, fstatSync, openSync, readSync } from 'node:fs'
import { readFile } from 'node:fs/promises'
import { basename } from 'node:path'
import { decodeText } from '../shared/decode-text.ts'
import { AppError, formatProblems } from '../shared/errors.ts'
import { takeEarlyRead } from './early-start.ts'

export interface InputFile {
  /** The name used in messages: the path as given, or "stdin". */
  name: string
  bytes: Buffer
  sha256: string
}

/** Reads a file, or standard input when the path is "-". Throws AppError('io') when unreadable. */
export async function readInput(path: string): Promise<InputFile> {
  const { name, bytes } = await readInputBytes(path)
  return { name, bytes, sha256: createHash('sha256').update(bytes).digest('hex') }
}

/**
 * The bytes of a file or of standard input, without their hash (see readInput). With `shared`, a
 * file is read into shared memory, so that another thread can work on the same bytes (standard
 * input is read as usual), or taken from the read that cli/early-start.ts started. Throws
 * AppError('io') when unreadable.
 */
export async function readInputBytes(path: string, options: { shared?: boolean } = {}): Promise<{ name: string; bytes: Buffer }> {
  let bytes: Buffer
  try {
    bytes = path === '-' ? await readStdin() : options.shared ? ((await takeEarlyRead(path)) ?? readShared(path)) : await readFile(path)
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    if (code === 'ENOENT') throw new AppError('not_found', `${path}: no such file`)
    if (code === 'EISDIR') throw new AppError('invalid_input', `${path}: is a folder, not a file`)
    throw new AppError('io', `${path}: cannot read (${code ?? (error as Error).message})`)
  }
  return { name: path === '-' ? 'stdin' : path, bytes }
}

/** A whole file in one SharedArrayBuffer (read with one call per chunk the system gives, not through a copy). */
function readShared(path: string): Buffer {
  const fd = openSync(path, 'r')
  try {
    const size = fstatSync(fd).size
    const bytes = Buffer.from(new SharedArrayBuffer(size))
    let at = 0
    while (at < size) {
      const n = readSync(fd, bytes, at, size - at, at)
      if (n === 0) break // the file shrank while it was read: what is there is what was read
      at += n
    }
    return at === size ? bytes : bytes.subarray(0, at)
  } finally {
    closeSync(fd)
  }
}

/** Reads an input as UTF-8 text; throws AppError('invalid_input') with file:line and reason otherwise. */
export async function readInputText(path: string): Promise<InputFile & { text: string }> {
  const file = await readInput(path)
  const decoded = decodeText(file.bytes)
  if (decoded.problem) throw new AppError('invalid_input', formatProblems([decoded.problem], file.name))
  return { ...file, text: decoded.text }
}

export function displayName(file: InputFile): string {
  return file.name === 'stdin' ? 'stdin' : basename(file.name)
}

async function readStdin(): Promise<Buffer> {
  const chunks: Buffer[] = []
  for await (const chunk of process.stdin) chunks.push(chunk as Buffer)
  return Buffer.concat(chunks)
}
