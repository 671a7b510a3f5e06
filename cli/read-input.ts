import { createHash } from 'node:crypto'
import { readFile } from 'node:fs/promises'
import { basename } from 'node:path'
import { decodeText } from '../shared/decode-text.ts'
import { AppError, formatProblems } from '../shared/errors.ts'

export interface InputFile {
  /** The name used in messages: the path as given, or "stdin". */
  name: string
  bytes: Buffer
  sha256: string
}

/** Reads a file, or standard input when the path is "-". Throws AppError('io') when unreadable. */
export async function readInput(path: string): Promise<InputFile> {
  let bytes: Buffer
  try {
    bytes = path === '-' ? await readStdin() : await readFile(path)
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code
    if (code === 'ENOENT') throw new AppError('not_found', `${path}: no such file`)
    if (code === 'EISDIR') throw new AppError('invalid_input', `${path}: is a folder, not a file`)
    throw new AppError('io', `${path}: cannot read (${code ?? (error as Error).message})`)
  }
  return { name: path === '-' ? 'stdin' : path, bytes, sha256: createHash('sha256').update(bytes).digest('hex') }
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
