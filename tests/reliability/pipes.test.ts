// A reader that stops early (`pitside plans list | head -1`) closes the pipe; the CLI must stop
// quietly, not print a stack trace (OWASP ASVS 5.0 V16.5: errors without internals; POSIX
// write(2): EPIPE when the reading end is closed).
import { execa } from 'execa'
import { describe, expect, it } from 'vitest'
import { binPath } from '../helpers/cli.ts'

describe('output into a closed pipe', () => {
  for (const args of [['--help'], ['labs', 'import', '--help'], ['calc', 'sets', '--json']]) {
    it(`ends quietly for pitside ${args.join(' ')} | true`, async () => {
      // `true` exits without reading, so every write after its exit fails with EPIPE
      const quoted = args.map((a) => `'${a}'`).join(' ')
      const r = await execa('bash', ['-c', `for i in 1 2 3; do node '${binPath}' ${quoted} | true; done`], { reject: false, env: { NO_COLOR: '1' } })
      expect(r.stderr).not.toMatch(/EPIPE|Unhandled 'error' event|node:events|\bat .*\.js:\d+/)
    })
  }
})
