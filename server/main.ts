import type { AddressInfo } from 'node:net'
import { openReader } from '../shared/db/open-database.ts'
import { loadSigningKeys } from '../shared/db/share-secret.ts'
import { AppError } from '../shared/errors.ts'
import { createApp } from './app.ts'
import { parseServerEnv } from './config.ts'
import { findWebDir } from './static.ts'

export interface RunningServer {
  url: string
  webBuilt: boolean
  database: ReturnType<typeof openReader>
  close(): Promise<void>
}

/** Opens the database read-only, builds the app and listens. Throws AppErrors for a missing database or a port in use. */
export async function startServer(options: { dbFile: string; host: string; port: number; env: NodeJS.ProcessEnv }): Promise<RunningServer> {
  const config = parseServerEnv(options.env)
  const keys = loadSigningKeys({ envSecret: config.secret, dbFile: options.dbFile })
  const database = openReader(options.dbFile)
  const webDir = findWebDir()
  const app = createApp({
    database,
    keys,
    webDir,
    trustProxy: config.trustProxy,
    sessionTtlSeconds: config.sessionTtlSeconds,
  })
  const server = await new Promise<import('node:http').Server>((resolve, reject) => {
    const s = app.listen(options.port, options.host)
    s.once('listening', () => resolve(s))
    s.once('error', (error: NodeJS.ErrnoException) => {
      void database.close()
      reject(
        error.code === 'EADDRINUSE'
          ? new AppError('io', `port ${options.port} on ${options.host} is already in use; choose another with --port`)
          : new AppError('io', `cannot listen on ${options.host}:${options.port}: ${error.message}`),
      )
    })
  })
  server.keepAliveTimeout = 65_000
  const { port } = server.address() as AddressInfo
  const host = options.host.includes(':') ? `[${options.host}]` : options.host
  return {
    url: `http://${host}:${port}/`,
    webBuilt: webDir !== null,
    database,
    close: async () => {
      await new Promise<void>((resolve) => {
        server.close(() => resolve())
        server.closeAllConnections()
      })
      await database.close()
    },
  }
}
