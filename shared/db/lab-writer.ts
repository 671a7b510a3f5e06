import type SQLite from 'better-sqlite3'
import { existsSync } from 'node:fs'
import type { Worker } from 'node:worker_threads'
import { AppError, type ErrorCode } from '../errors.ts'
import type { LabRow } from '../lab-csv.ts'
import type { LabResultValues } from '../lab-results.ts'
import { batchRows, beginLabFileWrite, firstBatchRows, LabRowBatch, LabRowWriteError, LabWordList, rowNumbers, type LabFileCounts, type LabFileMeta } from './lab-write.ts'
import { labWriteWorkerBuilt, newLabWriterThread, type LabWriterThread } from './lab-writer-thread.ts'

/**
 * Writes one lab file while it is being read. For a big file (see labWriterUsesWorker), the
 * inserts run in a worker thread on its own connection (shared/db/lab-write-worker.ts), so that
 * SQLite writes one batch while this thread parses and checks the next: on two cores the import
 * takes about as long as the longer of the two instead of their sum. Otherwise (a small file, an
 * in-memory database, the TypeScript sources under the test runner) the same batches are written
 * in this thread. Either way: one transaction, committed only by `finish`
 * with the file's counts; `finish(null)` or any failure leaves nothing of the file.
 *
 * While a worker writes, this thread's own connection only reads, and sees the database as it was
 * committed before the file's transaction began (the worker holds the write lock from the start).
 */
export interface LabFileWriter {
  /** the import run the results belong to */
  readonly runId: number
  /** Queues one checked row for the file's transaction. */
  add(row: LabRow, values: LabResultValues, supersedes: number | null): void
  /** True once a write failed: later rows are not written and `finish` rejects with the failure. */
  readonly failed: boolean
  /**
   * Commits the file with its counts and resolves to what was written, or, with null, rolls it
   * back and resolves to null. Rejects with the first failed write (LabRowWriteError names the
   * row's line; AppError for a conflict), after rolling back.
   */
  finish(counts: LabFileCounts | null): Promise<{ runId: number; count: number; replaced: number } | null>
}

export type WriteFailure =
  | { kind: 'row'; line: number; code: string | null; message: string }
  | { kind: 'app'; code: ErrorCode; message: string }
  | { kind: 'other'; code: string | null; message: string }

export type WorkerRequest =
  | { type: 'begin'; file: string; meta: LabFileMeta; ring: SharedArrayBuffer[] }
  | { type: 'close' }
  /** hash the bytes; `prehashed`: they were sent in a prehash, answer with its hash */
  | { type: 'hash'; buffer: SharedArrayBuffer; offset: number; length: number; prehashed: boolean }
  /** hash the bytes now, to answer a later hash of them that is `prehashed` */
  | { type: 'prehash'; buffer: SharedArrayBuffer; offset: number; length: number }
  /** a batch: its numbers are in `ring[slot]` of the begin message */
  | { type: 'rows'; words: string[]; text: string; slot: number; count: number }
  | { type: 'finish'; counts: LabFileCounts | null }

export type WorkerReply =
  | { type: 'ready'; runId: number }
  | { type: 'hashed'; sha256: string }
  | { type: 'committed'; runId: number; count: number; replaced: number }
  | { type: 'rolled-back' }
  | { type: 'failed'; failure: WriteFailure }

/** Batches the parser may run ahead of the writer (memory: about 1 MB each). */
const maxQueued = 8
/**
 * The batches' numbers live in this many buffers of shared memory, filled again in turn: fresh
 * memory costs a page fault per 4 KiB on first use, which on a virtual machine is as slow as
 * parsing the rows it holds (docs/performance.md). One more than may be queued, so that the
 * batch being filled never shares a buffer with one waiting to be written.
 */
const ringSize = maxQueued + 1

function errorOf(f: WriteFailure): Error {
  if (f.kind === 'row') return new LabRowWriteError(f.line, f.code ?? undefined, f.message)
  if (f.kind === 'app') return new AppError(f.code, f.message)
  return Object.assign(new Error(f.message), f.code ? { code: f.code } : {})
}

/** Files from this size on are written by a worker thread; below it, starting one costs more than it saves. */
export const workerFromBytes = 1024 * 1024

/**
 * True when this file's results will be written by a worker thread: a database file, the compiled
 * program and a file of workerFromBytes or more (PITSIDE_LAB_WRITER=thread|worker decides instead,
 * for comparisons).
 */
export function labWriterUsesWorker(sqlite: SQLite.Database, bytes: number | undefined): boolean {
  const mode = process.env.PITSIDE_LAB_WRITER
  if (mode === 'thread') return false
  const possible = !sqlite.memory && sqlite.name !== '' && existsSync(sqlite.name) && labWriteWorkerBuilt()
  return possible && (mode === 'worker' || (bytes ?? 0) >= workerFromBytes)
}

/**
 * A writer thread started before its file is read: its start-up (loading its modules, some
 * 0.2–0.3 s) then overlaps reading, hashing and decoding the file. It keeps the process alive only
 * once a file's write has taken it; `close` ends one that no file took.
 */
export interface SpareLabWriter {
  /**
   * The SHA-256 (hex) of a file's bytes, computed in the spare thread while this one goes on (with
   * the bytes in shared memory, nothing is copied), or already computed: `prehashed`, bytes the
   * thread was given early (cli/early-start.ts). Call before the file's write starts.
   */
  sha256(bytes: Uint8Array<SharedArrayBuffer>, prehashed: boolean): Promise<string>
  close(): void
}

interface WorkerChannel extends SpareLabWriter {
  worker: Worker
  control: Int32Array
  exited: Promise<void>
  /** the worker's next answer, in order; rejects when it failed or stopped without one */
  next(): Promise<WorkerReply>
}

/**
 * A writer thread for the big file about to be imported into this database (the same rule as
 * labWriterUsesWorker), or null when that file would be written in this thread. `started` is a
 * thread started earlier (cli/early-start.ts): it is used when it is still sound, ended otherwise.
 */
export function spareLabWriter(sqlite: SQLite.Database, bytes: number | undefined, started: LabWriterThread | null = null): SpareLabWriter | null {
  const usable = started && started.error === null ? started : null
  if (started && !usable) void started.worker.terminate()
  if (!labWriterUsesWorker(sqlite, bytes)) {
    if (usable) void usable.worker.terminate()
    return null
  }
  return openChannel(usable ?? newLabWriterThread())
}

function openChannel(thread: LabWriterThread): WorkerChannel {
  const { worker, control } = thread
  const exited = new Promise<void>((resolve) => worker.once('exit', () => resolve()))
  // the worker's answers in order; an error or exit without an answer rejects the one awaited
  const answers: WorkerReply[] = []
  let waiting: { resolve: (m: WorkerReply) => void; reject: (e: unknown) => void } | null = null
  let broken: unknown = null
  worker.on('message', (m: WorkerReply) => {
    if (waiting) {
      waiting.resolve(m)
      waiting = null
    } else answers.push(m)
  })
  const breakWith = (error: unknown) => {
    broken ??= error
    waiting?.reject(broken)
    waiting = null
  }
  worker.on('error', (error) => breakWith(error))
  worker.on('exit', () => breakWith(new Error('the lab writer thread stopped before it answered')))
  const next = () =>
    new Promise<WorkerReply>((resolve, reject) => {
      const m = answers.shift()
      if (m) return resolve(m)
      if (broken) return reject(broken)
      waiting = { resolve, reject }
    })
  return {
    worker,
    control,
    exited,
    next,
    close: () => worker.postMessage({ type: 'close' } satisfies WorkerRequest),
    sha256: async (bytes, prehashed) => {
      worker.postMessage({ type: 'hash', buffer: bytes.buffer, offset: bytes.byteOffset, length: bytes.length, prehashed } satisfies WorkerRequest)
      worker.ref() // a spare thread keeps the process alive only while this waits for its answer
      const answer = await next().finally(() => worker.unref())
      if (answer.type === 'hashed') return answer.sha256
      throw answer.type === 'failed' ? errorOf(answer.failure) : new Error(`the lab writer thread answered ${answer.type} to a hash`)
    },
  }
}

/**
 * Begins one lab file's transaction (see LabFileWriter), in the spare writer thread when one is
 * given (it is taken: used for this file when the file is written by a thread, closed otherwise). Throws what opening it throws (locked, disk).
 */
export async function startLabFileWriter(sqlite: SQLite.Database, meta: LabFileMeta, spare: SpareLabWriter | null = null): Promise<LabFileWriter> {
  if (!labWriterUsesWorker(sqlite, meta.bytes)) {
    spare?.close()
    return startInThread(sqlite, meta)
  }
  const channel = (spare as WorkerChannel | null) ?? openChannel(newLabWriterThread())
  channel.worker.ref()
  return startWorker(sqlite, meta, channel)
}

function startInThread(sqlite: SQLite.Database, meta: LabFileMeta): LabFileWriter {
  const write = beginLabFileWrite(sqlite, meta)
  const words = new LabWordList()
  let batch = new LabRowBatch(words)
  let failure: unknown = null
  const flush = () => {
    if (batch.count === 0 || failure) return
    try {
      write.insert(words.take(), batch.strings, batch.numbers, batch.count)
    } catch (error) {
      failure = error
    }
    batch = new LabRowBatch(words, batchRows, batch.numbers) // written: its buffer can be filled again
  }
  return {
    runId: write.runId,
    get failed() {
      return failure !== null
    },
    add(row, values, supersedes) {
      if (failure) return
      batch.add(row, values, supersedes)
      if (batch.full) flush()
    },
    async finish(counts) {
      flush()
      if (failure || !counts || write.count === 0) {
        write.rollback()
        if (failure) throw failure
        return null
      }
      const runId = write.commit(counts)
      return { runId, count: write.count, replaced: write.replaced }
    },
  }
}

async function startWorker(sqlite: SQLite.Database, meta: LabFileMeta, channel: WorkerChannel): Promise<LabFileWriter> {
  const { worker, control, exited, next } = channel
  const ring = Array.from({ length: ringSize }, () => new SharedArrayBuffer(batchRows * rowNumbers * Float64Array.BYTES_PER_ELEMENT))
  worker.postMessage({ type: 'begin', file: sqlite.name, meta, ring } satisfies WorkerRequest)
  const first = await next().catch(async (error) => {
    await exited
    throw error
  })
  if (first.type !== 'ready') {
    await exited
    throw first.type === 'failed' ? errorOf(first.failure) : new Error(`the lab writer thread answered ${first.type} before it was ready`)
  }

  // this thread's look-ups (stored results, history) read in one read transaction, opened once
  // the worker holds the write lock: one snapshot instead of a lock round-trip per query
  sqlite.exec('begin')
  const endRead = () => {
    if (sqlite.inTransaction) sqlite.exec('commit')
  }
  const words = new LabWordList()
  const failed = () => Atomics.load(control, 1) === 1
  /** waits until the writer has done `count` batches or failed (it notifies after each batch) */
  const waitDone = (count: number) => {
    for (let done = Atomics.load(control, 0); done < count && !failed(); done = Atomics.load(control, 0)) {
      Atomics.wait(control, 0, done, 1000)
    }
  }
  let sent = 0
  let queued = 0
  let batch = new LabRowBatch(words, firstBatchRows, new Float64Array(ring[0]!))
  const send = () => {
    if (batch.count === 0) return
    // wait while the writer is more than maxQueued batches behind
    waitDone(sent - maxQueued + 1)
    if (!failed()) {
      const message: WorkerRequest = { type: 'rows', words: words.take(), text: batch.strings.join('\u0000'), slot: sent % ringSize, count: batch.count }
      worker.postMessage(message)
      sent++
    }
    // the next batch's buffer was last used by batch sent - ringSize: it must have been written
    waitDone(sent - ringSize + 1)
    batch = new LabRowBatch(words, batchRows, new Float64Array(ring[sent % ringSize]!))
  }
  return {
    runId: first.runId,
    get failed() {
      return failed()
    },
    add(row, values, supersedes) {
      if (failed()) return
      batch.add(row, values, supersedes)
      queued++
      if (batch.full) send()
    },
    async finish(counts) {
      try {
        if (queued === 0) counts = null // nothing to write: no import run either
        if (counts) send()
        endRead() // before the commit, so that its checkpoint can run to the end
        worker.postMessage({ type: 'finish', counts } satisfies WorkerRequest)
        const answer = await next()
        if (answer.type === 'committed') return { runId: answer.runId, count: answer.count, replaced: answer.replaced }
        if (answer.type === 'failed') throw errorOf(answer.failure)
        return null
      } finally {
        endRead()
        await exited
      }
    },
  }
}
