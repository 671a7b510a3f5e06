import type SQLite from 'better-sqlite3'
import { createHash } from 'node:crypto'
import { parentPort, workerData } from 'node:worker_threads'
import { isAppError } from '../errors.ts'
import { openWriterSqlite } from './open-sqlite.ts'
import { beginLabFileWrite, LabRowWriteError, type LabFileMeta, type LabFileWrite } from './lab-write.ts'
import type { WorkerReply, WorkerRequest, WriteFailure } from './lab-writer.ts'

/**
 * The lab import's writer thread: its own connection to the database file, one transaction for
 * one lab file (shared/db/lab-write.ts), fed batches by the parsing thread (shared/db/lab-writer.ts).
 * Each batch done is counted in `control[0]` so that the parser never runs far ahead; the first
 * failure sets `control[1]`, later batches are dropped and the failure is the answer to `finish`.
 */
const { control: controlBuffer } = workerData as { control: SharedArrayBuffer }
const control = new Int32Array(controlBuffer)
const port = parentPort!
const reply = (m: WorkerReply) => port.postMessage(m)

function failureOf(error: unknown): WriteFailure {
  if (error instanceof LabRowWriteError) return { kind: 'row', line: error.line, code: error.code ?? null, message: error.message }
  if (isAppError(error)) return { kind: 'app', code: error.code, message: error.message }
  return { kind: 'other', code: (error as { code?: string })?.code ?? null, message: (error as Error)?.message ?? String(error) }
}

let sqlite: SQLite.Database | undefined
let write: LabFileWrite | undefined
let failure: WriteFailure | null = null
/** the numbers of the batches, in shared memory that the parser fills again once a batch is done */
let ring: Float64Array[] = []
/** the SHA-256 of the bytes of a `prehash` */
let prehashed: string | null = null

const sha256Of = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex')

const fail = (error: unknown) => {
  failure ??= failureOf(error)
  Atomics.store(control, 1, 1)
  Atomics.notify(control, 0)
}

const done = () => {
  port.off('message', onMessage)
  sqlite?.close()
  sqlite = undefined
}

function onMessage(m: WorkerRequest) {
  if (m.type === 'begin') {
    ring = m.ring.map((b) => new Float64Array(b))
    return begin(m.file, m.meta)
  }
  if (m.type === 'close') return done()
  if (m.type === 'prehash') {
    prehashed = sha256Of(new Uint8Array(m.buffer, m.offset, m.length))
    return
  }
  if (m.type === 'hash') {
    // bytes of the prehash (the asker knows they are the same), or hashed now
    const sha256 = (m.prehashed ? prehashed : null) ?? sha256Of(new Uint8Array(m.buffer, m.offset, m.length))
    prehashed = null
    return reply({ type: 'hashed', sha256 })
  }
  if (m.type === 'rows') {
    if (!failure && write) {
      try {
        write.insert(m.words, m.text.split('\u0000'), ring[m.slot]!, m.count)
      } catch (error) {
        fail(error)
      }
    }
    Atomics.add(control, 0, 1)
    Atomics.notify(control, 0)
    return
  }
  if (m.type === 'finish') {
    if (!failure && write && m.counts) {
      try {
        const runId = write.commit(m.counts)
        reply({ type: 'committed', runId, count: write.count, replaced: write.replaced })
        return done()
      } catch (error) {
        fail(error)
      }
    }
    try {
      write?.rollback()
    } catch (error) {
      fail(error)
    }
    reply(failure ? { type: 'failed', failure } : { type: 'rolled-back' })
    done()
  }
}

/** Opens the connection and the file's transaction once the file is known (the thread may start before). */
function begin(file: string, meta: LabFileMeta) {
  try {
    sqlite = openWriterSqlite(file)
    // a page cache of 2 MiB instead of better-sqlite3's 16: the rows append, the pages they touch
    // again are few, and fresh memory is slow here; a 200,000-row file writes as many pages either way
    sqlite.pragma('cache_size = -2048')
    write = beginLabFileWrite(sqlite, meta, { mayRebuildIndexes: true })
    reply({ type: 'ready', runId: write.runId })
  } catch (error) {
    fail(error)
    reply({ type: 'failed', failure: failure! })
    done()
  }
}

port.on('message', onMessage)
