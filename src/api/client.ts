import type { ApiErrorBody } from '../../shared/api-types.ts'

/** An error answered by the API: its HTTP status, code and message (written for people). */
export class ApiError extends Error {
  readonly status: number
  readonly code: string
  constructor(status: number, code: string, message: string) {
    super(message)
    this.name = 'ApiError'
    this.status = status
    this.code = code
  }
}

/** The one fetch helper: JSON in and out, the server's error body turned into an ApiError. */
export async function apiFetch<T>(path: string, init: { method?: string; body?: unknown; signal?: AbortSignal } = {}): Promise<T> {
  let response: Response
  try {
    response = await fetch(path, {
      method: init.method ?? 'GET',
      credentials: 'same-origin',
      headers: init.body === undefined ? { Accept: 'application/json' } : { Accept: 'application/json', 'Content-Type': 'application/json' },
      body: init.body === undefined ? undefined : JSON.stringify(init.body),
      signal: init.signal,
    })
  } catch {
    throw new ApiError(0, 'offline', 'The viewer cannot be reached. Check the connection and try again.')
  }
  if (response.status === 204) return undefined as T
  const text = await response.text()
  let data: unknown = null
  try {
    data = text ? JSON.parse(text) : null
  } catch {
    data = null
  }
  if (!response.ok) {
    const error = (data as ApiErrorBody | null)?.error
    throw new ApiError(response.status, error?.code ?? 'http_error', error?.message ?? `The server answered ${response.status}.`)
  }
  return data as T
}
