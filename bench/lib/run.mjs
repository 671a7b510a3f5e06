// Timed child processes: wall time, peak resident memory, optional CPU pinning.
import { spawn, spawnSync } from 'node:child_process'
import { existsSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'

const hasTime = existsSync('/usr/bin/time')
const hasTaskset = spawnSync('sh', ['-c', 'command -v taskset'], { encoding: 'utf8' }).status === 0
let rssSeq = 0

/** CPU numbers this process may run on (from taskset when available, else 0…n-1). */
export function availableCpus() {
  if (hasTaskset) {
    const r = spawnSync('taskset', ['-cp', String(process.pid)], { encoding: 'utf8' })
    const m = /:\s*([\d,-]+)\s*$/.exec(r.stdout ?? '')
    if (m) {
      const cpus = []
      for (const part of m[1].split(',')) {
        const [lo, hi] = part.split('-').map(Number)
        for (let c = lo; c <= (hi ?? lo); c++) cpus.push(c)
      }
      return cpus
    }
  }
  return []
}

export const canPin = hasTaskset

/**
 * Runs a command to its end and measures it. `cpu` pins it to one CPU (taskset), `rss` wraps it in
 * /usr/bin/time to read its peak resident memory. Resolves with the wall time in milliseconds,
 * exit code, output and peak RSS in MB (null when not measured). Rejects when `check` is set and
 * the command fails.
 */
export function runTimed(command, args, options = {}) {
  const { cpu = null, rss = false, env = process.env, cwd = process.cwd(), check = true, input = null } = options
  let argv = [command, ...args]
  let rssFile = null
  if (rss && hasTime) {
    rssFile = join(tmpdir(), `pitside-bench-rss-${process.pid}-${rssSeq++}.txt`)
    argv = ['/usr/bin/time', '-f', '%M', '-o', rssFile, ...argv]
  }
  if (cpu !== null && hasTaskset) argv = ['taskset', '-c', String(cpu), ...argv]
  return new Promise((resolve, reject) => {
    const started = process.hrtime.bigint()
    const child = spawn(argv[0], argv.slice(1), { cwd, env, stdio: ['pipe', 'pipe', 'pipe'] })
    const out = []
    const err = []
    child.stdout.on('data', (d) => out.push(d))
    child.stderr.on('data', (d) => err.push(d))
    child.on('error', reject)
    if (input !== null) child.stdin.end(input)
    else child.stdin.end()
    child.on('close', (code) => {
      const ms = Number(process.hrtime.bigint() - started) / 1e6
      let rssMb = null
      if (rssFile) {
        try {
          const kb = Number(readFileSync(rssFile, 'utf8').trim().split('\n').pop())
          if (Number.isFinite(kb)) rssMb = kb / 1024
        } catch {}
        rmSync(rssFile, { force: true })
      }
      const result = { ms, code, rssMb, stdout: Buffer.concat(out).toString('utf8'), stderr: Buffer.concat(err).toString('utf8') }
      if (check && code !== 0) {
        reject(new Error(`${argv.join(' ')} exited ${code}\n${result.stderr.slice(-2000)}`))
      } else resolve(result)
    })
  })
}

/** Starts a long-running process (a server); returns it with a stop() that ends it and waits. */
export function startProcess(command, args, options = {}) {
  const { cpu = null, env = process.env, cwd = process.cwd() } = options
  let argv = [command, ...args]
  if (cpu !== null && hasTaskset) argv = ['taskset', '-c', String(cpu), ...argv]
  const child = spawn(argv[0], argv.slice(1), { cwd, env, stdio: ['ignore', 'pipe', 'pipe'] })
  const logs = []
  child.stdout.on('data', (d) => logs.push(d))
  child.stderr.on('data', (d) => logs.push(d))
  const exited = new Promise((resolve) => child.on('close', resolve))
  return {
    child,
    log: () => Buffer.concat(logs).toString('utf8'),
    stop: async () => {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM')
      const timer = setTimeout(() => child.kill('SIGKILL'), 5000)
      await exited
      clearTimeout(timer)
    },
  }
}

/** Waits until `url` answers (any status), or throws after `timeoutMs`. */
export async function waitForHttp(url, timeoutMs = 20_000, proc = null) {
  const until = Date.now() + timeoutMs
  for (;;) {
    try {
      await fetch(url)
      return
    } catch {
      if (proc && proc.child.exitCode !== null) throw new Error(`server exited before answering: ${proc.log().slice(-2000)}`)
      if (Date.now() > until) throw new Error(`${url} did not answer within ${timeoutMs} ms${proc ? `: ${proc.log().slice(-2000)}` : ''}`)
      await new Promise((r) => setTimeout(r, 100))
    }
  }
}
