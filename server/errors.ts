import type { ErrorRequestHandler, RequestHandler } from 'express'
import { AppError, isAppError, type ErrorCode } from '../shared/errors.ts'

// The one place that turns error codes into HTTP statuses.
const statuses: Record<ErrorCode, number> = {
  usage: 400,
  invalid_input: 400,
  not_found: 404,
  conflict: 409,
  unauthorized: 401,
  forbidden: 403,
  rate_limited: 429,
  io: 500,
  database: 503,
  config: 500,
}

/** The JSON 404 for an /api route that does not exist. */
export const apiNotFound: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `no API route ${req.method} ${req.baseUrl}${req.path.startsWith('/share/') ? '/share/…' : req.path}`))
}

interface BodyParserError extends Error {
  type?: string
  status?: number
}

/** Answers `{ "error": { "code", "message" } }`; a 500 never carries internal text. */
export function errorMiddleware(log: (line: string) => void): ErrorRequestHandler {
  return (error, _req, res, _next) => {
    if (isAppError(error)) {
      const status = statuses[error.code]
      if (status >= 500) log(`pitside serve: ${error.code}: ${error.message}`)
      res.status(status).json({ error: { code: error.code, message: status >= 500 && error.code !== 'database' ? 'the server could not answer; see its log' : error.message } })
      return
    }
    const e = error as BodyParserError
    if (e?.type === 'entity.parse.failed') {
      res.status(400).json({ error: { code: 'invalid_input', message: 'expected a JSON body, found text that is not JSON' } })
      return
    }
    if (e?.type === 'entity.too.large') {
      res.status(413).json({ error: { code: 'invalid_input', message: 'the request body is too large' } })
      return
    }
    if (typeof e?.status === 'number' && e.status >= 400 && e.status < 500) {
      res.status(e.status).json({ error: { code: 'invalid_input', message: 'the request could not be read' } })
      return
    }
    log(`pitside serve: unexpected failure (this is a bug): ${e?.stack ?? String(error)}`)
    res.status(500).json({ error: { code: 'internal', message: 'something went wrong on the server (this is a bug)' } })
  }
}
