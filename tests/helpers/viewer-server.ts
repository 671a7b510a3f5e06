import { execa, type ResultPromise } from 'execa'
import { execSync } from 'node:child_process'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { chromium, type BrowserContext } from 'playwright-core'
import { binPath } from './cli.ts'

export interface ServeProcess {
  url: string
  stderr: () => string
  stop(): Promise<void>
}

/** Spawns the built `pitside serve --port 0` for real and waits for the URL it prints. */
export async function spawnServe(dbFile: string, env: Record<string, string> = {}): Promise<ServeProcess> {
  const child: ResultPromise = execa('node', [binPath, '--db', dbFile, 'serve', '--port', '0'], {
    reject: false,
    env: { NO_COLOR: '1', ...env },
    buffer: false,
  })
  let out = ''
  let err = ''
  child.stderr!.on('data', (d: Buffer) => (err += d.toString()))
  const url = await new Promise<string>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`pitside serve printed no URL within 20 s; stderr:\n${err}`)), 20_000)
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
      reject(new Error(`pitside serve exited with ${r.exitCode}; stderr:\n${err}`))
    })
  })
  return {
    url,
    stderr: () => err,
    stop: async () => {
      child.kill('SIGTERM')
      await child
    },
  }
}

/** Debian's chromium, driven by playwright-core with a fresh profile (never a downloaded browser). */
export async function launchBrowser(): Promise<{ context: BrowserContext; close(): Promise<void> }> {
  const profile = mkdtempSync(join(tmpdir(), 'browser-profile-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: process.env.CHROMIUM_PATH ?? execSync('command -v chromium').toString().trim(),
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
    viewport: { width: 1280, height: 800 },
  })
  return {
    context,
    close: async () => {
      await context.close()
      rmSync(profile, { recursive: true, force: true })
    },
  }
}
