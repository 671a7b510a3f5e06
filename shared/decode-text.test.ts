import { describe, expect, it } from 'vitest'
import { decodeText } from './decode-text.ts'

const enc = (s: string) => new TextEncoder().encode(s)

describe('decodeText', () => {
  it('reads UTF-8 text', () => {
    expect(decodeText(enc('a,b\n1,2\n')).text).toBe('a,b\n1,2\n')
  })
  const refused = [
    { name: 'an empty file', bytes: new Uint8Array(), code: 'empty_file', line: 1 },
    { name: 'UTF-16 with a byte-order mark', bytes: new Uint8Array([0xff, 0xfe, 0x61, 0x00]), code: 'utf16', line: 1 },
    { name: 'a PNG renamed .csv', bytes: new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a]), code: 'binary_file', line: 1 },
    { name: 'a NUL byte on line 2', bytes: enc('a,b\n1,\u00002\n'), code: 'nul_byte', line: 2 },
    { name: 'Latin-1 bytes on line 3', bytes: new Uint8Array([...enc('a\nb\n'), 0xe9, 0x0a]), code: 'invalid_utf8', line: 3 },
  ]
  it.each(refused)('refuses $name with a line', ({ bytes, code, line }) => {
    expect(decodeText(bytes).problem).toMatchObject({ code, line })
  })
})
