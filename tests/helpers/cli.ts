import { execa, type Options } from 'execa'
import { fileURLToPath } from 'node:url'

export const binPath = fileURLToPath(new URL('../../bin/pitside.js', import.meta.url))

/** Runs the built `pitside` binary; never throws on a non-zero exit. */
export function runCli(args: string[], options: Options = {}) {
  return execa('node', [binPath, ...args], {
    reject: false,
    env: { NO_COLOR: '1', ...(options.env ?? {}) },
    ...options,
  })
}
