import { useQuery, type QueryClient } from '@tanstack/react-query'
import type { ComponentType } from 'react'
import { Navigate, Outlet, useLocation, type RouteObject } from 'react-router'
import { farmQueryOptions, farmsQueryOptions, planQueryOptions, planVersionsQueryOptions, sessionQueryOptions } from './api/queries.ts'
import { Loading, Problem, Shell } from './components/layout.tsx'

/** Pages load on demand, so the first page carries only what it needs. */
const page = (load: () => Promise<{ default: ComponentType }>) => async () => ({ Component: (await load()).default })

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

/**
 * The viewer's pages, for the browser's router (src/main.tsx) and the server's rendering of a plan
 * page (src/entry-server.tsx): one tree, so both render the same page. The loaders start each
 * page's requests while its code loads, instead of after the sign-in check and the page have
 * rendered; the page reads them from the cache with the same query options. They never wait and
 * always return null (the data lives in the query cache, not in the router).
 */
export function appRoutes(queryClient: QueryClient): RouteObject[] {
  const prefetch = (...options: { queryKey: readonly unknown[] }[]) => {
    for (const o of options) void queryClient.prefetchQuery(o as Parameters<typeof queryClient.prefetchQuery>[0])
    return null
  }
  return [
    { id: 'sign-in', path: '/sign-in', lazy: page(() => import('./routes/sign-in.tsx')) },
    { id: 'share', path: '/s/:token', lazy: page(() => import('./routes/share.tsx')) },
    {
      id: 'signed-in',
      path: '/',
      element: <SignedIn />,
      loader: () => prefetch(sessionQueryOptions()),
      children: [
        { id: 'home', index: true, element: <Home /> },
        { id: 'farms', path: 'farms', loader: () => prefetch(farmsQueryOptions()), lazy: page(() => import('./routes/farms.tsx')) },
        { id: 'farm', path: 'farms/:code', loader: ({ params }) => prefetch(farmQueryOptions(params.code ?? '')), lazy: page(() => import('./routes/farm.tsx')) },
        {
          id: 'plan',
          path: 'plans/:id',
          loader: ({ params }) => prefetch(planQueryOptions(params.id ?? ''), planVersionsQueryOptions(params.id ?? '')),
          lazy: page(() => import('./routes/plan.tsx')),
        },
      ],
    },
    { id: 'not-found', path: '*', element: <NotFound /> },
  ]
}
