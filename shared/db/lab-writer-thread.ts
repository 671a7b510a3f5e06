import { existsSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { Worker } from 'node:worker_threads'

/**
 * Starting the lab import's writer thread (shared/db/lab-write-worker.ts), kept apart from the
 * rest of shared/db/lab-writer.ts so that the command line can start one before it has loaded
 * anything else (cli/early-start.ts): this module needs nothing but Node's own.
 */

export const labWriteWorkerFile = fileURLToPath(new URL('./lab-write-worker.js', import.meta.url))

/** Whether the compiled writer thread is there (not under the test runner, which runs the TypeScript sources). */
export function labWriteWorkerBuilt(): boolean {
  return existsSync(labWriteWorkerFile)
}

export interface LabWriterThread {
  worker: Worker
  /** shared with the thread: [batches done, failed] */
  control: Int32Array
  /** the first error the thread raised before anyone listened to it */
  error: unknown
}

/**
 * A writer thread, unref'd (it keeps the process alive only once a file's write takes it), with
 * a listener for an error it raises before its owner listens (an error event nobody listens to
 * would end the process).
 */
export function newLabWriterThread(): LabWriterThread {
  const control = new Int32Array(new SharedArrayBuffer(8))
  // the writer only turns batches into inserts: a small heap keeps the import's memory flat
  const worker = new Worker(labWriteWorkerFile, {
    workerData: { control: control.buffer },
    resourceLimits: { maxYoungGenerationSizeMb: 8, maxOldGenerationSizeMb: 96 },
  })
  worker.unref()
  const thread: LabWriterThread = { worker, control, error: null }
  worker.once('error', (error) => {
    thread.error ??= error
  })
  return thread
}
