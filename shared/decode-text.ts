import { isUtf8 } from 'node:buffer'
import type { Problem } from './errors.ts'

/**
 * Why a file's bytes are not UTF-8 text, or null when they are: an empty file, UTF-16, binary files
 * (NUL bytes, image signatures) and invalid UTF-8, each with the line it is on. Checks without
 * decoding, for a reader of the bytes themselves (shared/lab-csv.ts).
 */
export function textProblem(bytes: Uint8Array): Problem | null {
  if (bytes.length === 0) return { code: 'empty_file', line: 1, message: 'the file is empty' }
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    return { code: 'utf16', line: 1, message: 'the file is UTF-16 text; save it as "CSV UTF-8" and import again' }
  }
  const signature = binarySignature(bytes)
  if (signature) return { code: 'binary_file', line: 1, message: `this is a ${signature} file, not CSV text` }
  const nul = bytes.indexOf(0)
  if (nul !== -1) {
    return {
      code: 'nul_byte',
      line: lineAt(bytes, nul),
      message: 'contains a NUL byte: this is not a text file (or it is UTF-16 without a byte-order mark)',
    }
  }
  return isUtf8(bytes) ? null : invalidUtf8(bytes)
}

function invalidUtf8(bytes: Uint8Array): Problem {
  return {
    code: 'invalid_utf8',
    line: lineAt(bytes, firstInvalidUtf8(bytes)),
    message: 'is not valid UTF-8 (perhaps saved as Windows-1252 or Latin-1); save it as "CSV UTF-8"',
  }
}

/**
 * Turns a file's bytes into text, refusing what is not UTF-8 text (see textProblem). Returns the
 * text without a byte-order mark, or a problem.
 */
export function decodeText(bytes: Uint8Array): { text: string; problem?: undefined } | { text?: undefined; problem: Problem } {
  const problem = textProblem(bytes)
  if (problem) return { problem }
  try {
    return { text: new TextDecoder('utf-8', { fatal: true, ignoreBOM: false }).decode(bytes) }
  } catch {
    return { problem: invalidUtf8(bytes) } // a decoder stricter than isUtf8 would be a surprise, not a crash
  }
}

function binarySignature(b: Uint8Array): string | null {
  const starts = (...sig: number[]) => sig.every((v, i) => b[i] === v)
  if (starts(0x89, 0x50, 0x4e, 0x47)) return 'PNG image'
  if (starts(0xff, 0xd8, 0xff)) return 'JPEG image'
  if (starts(0x25, 0x50, 0x44, 0x46)) return 'PDF'
  if (starts(0x50, 0x4b, 0x03, 0x04)) return 'ZIP (an .xlsx workbook is one; export it as CSV)'
  if (starts(0xd0, 0xcf, 0x11, 0xe0)) return 'legacy Office (.xls)'
  if (starts(0x53, 0x51, 0x4c, 0x69, 0x74, 0x65)) return 'SQLite database'
  return null
}

function lineAt(bytes: Uint8Array, index: number): number {
  let line = 1
  for (let i = 0; i < index && i < bytes.length; i++) if (bytes[i] === 10) line++
  return line
}

function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0
  while (i < b.length) {
    const c = b[i]!
    let extra = 0
    if (c < 0x80) extra = 0
    else if (c >= 0xc2 && c <= 0xdf) extra = 1
    else if (c >= 0xe0 && c <= 0xef) extra = 2
    else if (c >= 0xf0 && c <= 0xf4) extra = 3
    else return i
    for (let k = 1; k <= extra; k++) {
      const cc = b[i + k]
      if (cc === undefined || (cc & 0xc0) !== 0x80) return i
    }
    i += extra + 1
  }
  return b.length
}
