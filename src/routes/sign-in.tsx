import { useMutation, useQueryClient } from '@tanstack/react-query'
import { useState, type FormEvent } from 'react'
import { useNavigate, useSearchParams } from 'react-router'
import type { SessionResponse } from '../../shared/api-types.ts'
import { ApiError, apiFetch } from '../api/client.ts'
import { Brand } from '../components/layout.tsx'

export default function SignIn() {
  const [email, setEmail] = useState('')
  const [password, setPassword] = useState('')
  const [params] = useSearchParams()
  const navigate = useNavigate()
  const queryClient = useQueryClient()
  const next = params.get('next')
  const signIn = useMutation({
    mutationFn: () => apiFetch<SessionResponse>('/api/session', { method: 'POST', body: { email, password } }),
    onSuccess: (session) => {
      queryClient.setQueryData(['session'], session)
      // only paths inside the viewer, never another site
      navigate(next && next.startsWith('/') && !next.startsWith('//') ? next : '/', { replace: true })
    },
  })
  const submit = (e: FormEvent) => {
    e.preventDefault()
    signIn.mutate()
  }
  const error = signIn.error instanceof ApiError ? signIn.error.message : signIn.error ? 'Signing in failed. Try again.' : null
  return (
    <main id="main" className="mx-auto flex min-h-screen max-w-md flex-col justify-center px-4 py-10">
      <div className="mb-6 text-2xl">
        <Brand />
      </div>
      <form onSubmit={submit} className="space-y-4 rounded-md border border-line bg-surface p-6" noValidate>
        <h1 className="text-xl font-semibold">Sign in</h1>
        <p className="text-sm text-muted">Plans and storage records for the farms your advisor works with.</p>
        <div>
          <label htmlFor="email" className="block font-semibold">
            E-mail address
          </label>
          <input
            id="email"
            type="email"
            autoComplete="username"
            required
            value={email}
            onChange={(e) => setEmail(e.target.value)}
            className="mt-1 w-full rounded-md border border-muted bg-surface px-3 py-2.5 text-base"
          />
        </div>
        <div>
          <label htmlFor="password" className="block font-semibold">
            Password
          </label>
          <input
            id="password"
            type="password"
            autoComplete="current-password"
            required
            value={password}
            onChange={(e) => setPassword(e.target.value)}
            className="mt-1 w-full rounded-md border border-muted bg-surface px-3 py-2.5 text-base"
          />
        </div>
        {error && (
          <p role="alert" className="rounded-md border border-danger px-3 py-2 text-danger">
            {error}
          </p>
        )}
        <button
          type="submit"
          disabled={signIn.isPending}
          className="w-full rounded-md bg-accent px-4 py-2.5 font-semibold text-white hover:brightness-110 disabled:opacity-60"
        >
          {signIn.isPending ? 'Signing in…' : 'Sign in'}
        </button>
        <p className="text-xs text-muted">Accounts are made by your advisor. Forgotten password? Ask them to set a new one.</p>
      </form>
    </main>
  )
}
