import { QueryClient, QueryClientProvider, useQuery } from '@tanstack/react-query'
import { StrictMode, type ComponentType } from 'react'
import { createRoot } from 'react-dom/client'
import { createBrowserRouter, Navigate, Outlet, RouterProvider, useLocation } from 'react-router'
import { farmQueryOptions, farmsQueryOptions, planQueryOptions, planVersionsQueryOptions, sessionQueryOptions } from './api/queries.ts'
import { Loading, Problem, Shell } from './components/layout.tsx'
import './styles.css'

const queryClient = new QueryClient({ defaultOptions: { queries: { refetchOnWindowFocus: false } } })

/** Pages load on demand, so the first page carries only what it needs. */
const page = (load: () => Promise<{ default: ComponentType }>) => async () => ({ Component: (await load()).default })

/**
 * Starts a page's requests while its code loads, instead of after the sign-in check and the page
 * have rendered; the page reads them from the cache with the same query options. Never waits.
 */
const prefetch = (...options: { queryKey: readonly unknown[] }[]) => {
  for (const o of options) void queryClient.prefetchQuery(o as Parameters<typeof queryClient.prefetchQuery>[0])
  return null
}

function SignedIn() {
  const session = useQuery(sessionQueryOptions())
  const location = useLocation()
  if (session.isPending) return <Shell><Loading what="your account" /></Shell>
  if (session.isError) return <Shell><Problem title="The viewer cannot be reached" message={(session.error as Error).message} /></Shell>
  if (!session.data) {
    const next = location.pathname === '/' ? '' : `?next=${encodeURIComponent(location.pathname + location.search)}`
    return <Navigate to={`/sign-in${next}`} replace />
  }
  return (
    <Shell user={session.data.user}>
      <Outlet />
    </Shell>
  )
}

function Home() {
  const session = useQuery(sessionQueryOptions())
  const user = session.data?.user
  if (user?.role === 'client' && user.farms.length === 1) return <Navigate to={`/farms/${encodeURIComponent(user.farms[0]!)}`} replace />
  return <Navigate to="/farms" replace />
}

function NotFound() {
  return <Shell><Problem title="Not found" message="There is no page at this address." /></Shell>
}

const router = createBrowserRouter([
  { path: '/sign-in', lazy: page(() => import('./routes/sign-in.tsx')) },
  { path: '/s/:token', lazy: page(() => import('./routes/share.tsx')) },
  {
    path: '/',
    element: <SignedIn />,
    loader: () => prefetch(sessionQueryOptions()),
    children: [
      { index: true, element: <Home /> },
      { path: 'farms', loader: () => prefetch(farmsQueryOptions()), lazy: page(() => import('./routes/farms.tsx')) },
      { path: 'farms/:code', loader: ({ params }) => prefetch(farmQueryOptions(params.code ?? '')), lazy: page(() => import('./routes/farm.tsx')) },
      {
        path: 'plans/:id',
        loader: ({ params }) => prefetch(planQueryOptions(params.id ?? ''), planVersionsQueryOptions(params.id ?? '')),
        lazy: page(() => import('./routes/plan.tsx')),
      },
    ],
  },
  { path: '*', element: <NotFound /> },
])

createRoot(document.getElementById('root')!).render(
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  </StrictMode>,
)
