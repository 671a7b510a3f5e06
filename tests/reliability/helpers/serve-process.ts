import { execa, type ResultPromise } from 'execa'
import { readFileSync } from 'node:fs'
import { binPath } from '../../helpers/cli.ts'

export interface Served {
  url: string
  pid: number
  stderr(): string
  /** Resident memory of the server process in bytes (Linux /proc). */
  rssBytes(): number
  stop(): Promise<void>
}

/** Spawns the built `pitside serve --port 0` and resolves with its URL and process id. */
export async function serve(dbFile: string, env: Record<string, string> = {}): Promise<Served> {
  const child: ResultPromise = execa('node', [binPath, '--db', dbFile, 'serve', '--port', '0'], {
    reject: false,
    buffer: false,
    env: { NO_COLOR: '1', PITSIDE_SECRET: Buffer.alloc(32, 11).toString('base64url'), ...env },
  })
  let out = ''
  let err = ''
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()))
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`pitside serve printed no URL within 30 s:\n${err}`)), 30_000)
    child.stdout!.on('data', (d: Buffer) => {
      out += d.toString()
      const m = /^(http:\/\/\S+)$/m.exec(out)
      if (m) {
        clearTimeout(timer)
        resolve(m[1]!.replace(/\/$/, ''))
      }
    })
    void child.then((r) => {
      clearTimeout(timer)
      reject(new Error(`pitside serve exited with ${r.exitCode}:\n${err}`))
    })
  })
  return {
    url,
    pid: child.pid!,
    stderr: () => err,
    rssBytes: () => {
      const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'))
      return m ? Number(m[1]) * 1024 : NaN
    },
    stop: async () => {
      child.kill('SIGTERM')
      await child
    },
  }
}

/** Signs in against a running viewer; returns the cookie (name=value). */
export async function signInTo(url: string, email: string, password: string): Promise<string> {
  const res = await fetch(`${url}/api/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password }) })
  if (res.status !== 200) throw new Error(`sign-in as ${email}: ${res.status} ${await res.text()}`)
  return res.headers.getSetCookie()[0]!.split(';')[0]!
}
