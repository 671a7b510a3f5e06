// The command line's early start (cli/early-start.ts): which file of a `labs import` it reads
// before the program has loaded, and that the command gets those bytes only when they are the
// bytes of the file as it is when the command reads it.
import { readFileSync, statSync, utimesSync, writeFileSync } from 'node:fs'
import { afterAll, describe, expect, it } from 'vitest'
import { labImportFirstFile, startEarly, takeEarlyLabWriter, takeEarlyRead } from '../../cli/early-start.ts'
import { makeTempDir } from '../helpers/temp-db.ts'

const tmp = makeTempDir('pitside-early-')
afterAll(() => tmp.cleanup())

/** A file of about 2 MB (the early read is for files of 1 MB and more). */
function bigFile(name: string, fill: string): string {
  const path = tmp.path(name)
  writeFileSync(path, fill.repeat(2 * 1024 * 1024 / fill.length))
  return path
}

describe('labImportFirstFile', () => {
  it('finds the first file of a labs import among the options, whatever their order', () => {
    expect(labImportFirstFile(['labs', 'import', 'a.csv', 'b.csv'])).toBe('a.csv')
    expect(labImportFirstFile(['--db', 'farm.db', '-q', 'labs', 'import', '--profile', 'p.json', '--replace', 'a.csv'])).toBe('a.csv')
    expect(labImportFirstFile(['labs', '--json', 'import', '--reference', 'set', 'a.csv'])).toBe('a.csv')
    expect(labImportFirstFile(['labs', 'import', '--', '-odd-name.csv'])).toBe('-odd-name.csv')
  })

  it('finds nothing for other commands, for standard input and for a database named like a command', () => {
    expect(labImportFirstFile(['plan', '--all'])).toBeNull()
    expect(labImportFirstFile(['labs', 'import', '-'])).toBeNull()
    expect(labImportFirstFile(['labs', 'import'])).toBeNull()
    expect(labImportFirstFile(['--db', 'labs', 'import', 'x.csv'])).toBeNull() // `import` is the command, `labs` the database
    expect(labImportFirstFile(['farms', 'import', 'labs', 'import'])).toBeNull()
  })
})

describe('the early read', () => {
  it('gives the command the bytes of the file it names, in order (it is read in parts at once), once', async () => {
    // numbered lines and an odd size: parts in the wrong place or a short last part would show
    const path = tmp.path('a.csv')
    writeFileSync(path, 'report_id,sample_id\n' + Array.from({ length: 120_001 }, (_, i) => `CRA-${i},S-${i * 7}`).join('\n') + '\nxy')
    expect(statSync(path).size % 2).toBe(1)
    startEarly(['labs', 'import', path])
    takeEarlyLabWriter()?.worker.terminate() // none under the test runner: the writer thread is not built here
    expect(await takeEarlyRead(tmp.path('other.csv'))).toBeNull()
    const bytes = await takeEarlyRead(path)
    expect(bytes).not.toBeNull()
    expect(Buffer.compare(bytes!, readFileSync(path))).toBe(0)
    expect(bytes!.buffer).toBeInstanceOf(SharedArrayBuffer)
    expect(await takeEarlyRead(path)).toBeNull() // taken
  })

  it('gives nothing when the file changed after it was read, so that the command reads it again', async () => {
    const path = bigFile('b.csv', 'first,version\n')
    startEarly(['labs', 'import', path])
    await new Promise((resolve) => setTimeout(resolve, 50))
    writeFileSync(path, 'second,versio\n'.repeat(2 * 1024 * 1024 / 14)) // same size, new content
    utimesSync(path, new Date(), new Date(Date.now() + 5000))
    expect(await takeEarlyRead(path)).toBeNull()
  })

  it('reads nothing early for a small file, or one that does not exist', async () => {
    const small = tmp.path('small.csv')
    writeFileSync(small, 'report_id,sample_id\n')
    startEarly(['labs', 'import', small])
    expect(await takeEarlyRead(small)).toBeNull()
    startEarly(['labs', 'import', tmp.path('missing.csv')])
    expect(await takeEarlyRead(tmp.path('missing.csv'))).toBeNull()
  })
})
