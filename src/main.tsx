import { QueryClient, QueryClientProvider } from '@tanstack/react-query'
import { StrictMode } from 'react'
import { createRoot, hydrateRoot } from 'react-dom/client'
import { createBrowserRouter, matchRoutes, RouterProvider, type RouteObject } from 'react-router'
import { appRoutes } from './app-routes.tsx'
import { planQueryOptions } from './api/queries.ts'
import { readPageData, seedQueries } from './page-data.ts'
import './styles.css'

const queryClient = new QueryClient({ defaultOptions: { queries: { refetchOnWindowFocus: false } } })
const routes = appRoutes(queryClient)
const container = document.getElementById('root')!

const app = (router: ReturnType<typeof createBrowserRouter>) => (
  <StrictMode>
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>
  </StrictMode>
)

/** Loads the code of the routes that match this address, so that the first render has every page component. */
async function resolveLazyRoutes(all: RouteObject[]): Promise<void> {
  const lazy = (matchRoutes(all, window.location) ?? []).filter((m) => m.route.lazy)
  await Promise.all(
    lazy.map(async (m) => {
      const loaded = await (m.route.lazy as () => Promise<Partial<RouteObject>>)()
      Object.assign(m.route, { ...loaded, lazy: undefined })
    }),
  )
}

/**
 * A page the server rendered (a plan page: its markup in #root, its small answers in the data
 * element, the plan fetched: see PageData) is hydrated from the same answers, with the page's code
 * and the plan loaded first and without running the loaders; every other page is rendered here. A
 * plan that cannot be fetched now leaves the page to render itself, which shows why.
 */
async function start() {
  const renderHere = () => createRoot(container).render(app(createBrowserRouter(routes)))
  const data = readPageData(document)
  if (!data) return renderHere()
  seedQueries(queryClient, data)
  const [, plan] = await Promise.allSettled([resolveLazyRoutes(routes), queryClient.fetchQuery(planQueryOptions(data.planId))])
  if (plan.status === 'rejected') return renderHere()
  hydrateRoot(container, app(createBrowserRouter(routes, { hydrationData: data.router })))
}

void start()
