import { useMutation, useQueryClient } from '@tanstack/react-query'
import type { ReactNode } from 'react'
import { Link, useNavigate } from 'react-router'
import type { SessionUser } from '../../shared/api-types.ts'
import { apiFetch } from '../api/client.ts'

export function Brand() {
  return (
    <span className="inline-flex items-center gap-2 font-semibold tracking-tight">
      <svg aria-hidden viewBox="0 0 24 24" className="h-6 w-6">
        <rect x="2" y="9" width="20" height="13" rx="2" fill="var(--color-accent)" />
        <path d="M2 13 H22" stroke="var(--color-paper)" strokeWidth="1.5" />
        <path d="M6 9 V5 M12 9 V3 M18 9 V6" stroke="var(--color-ink)" strokeWidth="2" strokeLinecap="round" />
      </svg>
      Pitside
    </span>
  )
}

export function Shell({ user, children }: { user?: SessionUser; children: ReactNode }) {
  const queryClient = useQueryClient()
  const navigate = useNavigate()
  const signOut = useMutation({
    mutationFn: () => apiFetch<void>('/api/session', { method: 'DELETE' }),
    onSettled: () => {
      queryClient.clear()
      navigate('/sign-in', { replace: true })
    },
  })
  return (
    <div className="min-h-screen">
      <a href="#main" className="skip-link">Skip to content</a>
      <header className="no-print border-b border-line bg-surface">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center justify-between gap-3 px-4 py-3">
          <div className="flex items-center gap-5">
            <Link to="/" className="text-ink no-underline">
              <Brand />
            </Link>
            {user && (
              <nav aria-label="Main">
                <Link to="/farms" className="text-accent underline-offset-4 hover:underline">
                  Farms
                </Link>
              </nav>
            )}
          </div>
          {user && (
            <div className="flex items-center gap-3 text-sm">
              <span>
                <span className="font-semibold">{user.name}</span>
                <span className="hidden text-muted sm:inline"> · {user.role === 'advisor' ? user.organization.name : 'client'}</span>
              </span>
              <button
                type="button"
                onClick={() => signOut.mutate()}
                className="whitespace-nowrap rounded-md border border-ink px-3 py-1.5 font-semibold hover:bg-accent-soft"
              >
                Sign out
              </button>
            </div>
          )}
        </div>
      </header>
      <main id="main" className="mx-auto max-w-6xl px-4 py-6 print:max-w-none print:p-0">
        {children}
      </main>
    </div>
  )
}

export function Loading({ what }: { what: string }) {
  return (
    <p role="status" className="text-muted">
      Loading {what}…
    </p>
  )
}

export function Problem({ title, message, children }: { title: string; message: string; children?: ReactNode }) {
  return (
    <div role="alert" className="max-w-xl rounded-md border-2 border-danger bg-surface p-5">
      <h1 className="text-xl font-semibold">{title}</h1>
      <p className="mt-2">{message}</p>
      {children}
    </div>
  )
}
