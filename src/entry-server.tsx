// The server's rendering of a signed-in plan page (`vite build --ssr` → dist/ssr/entry-server.js,
// loaded by server/plan-page.ts). The same routes and components as the browser (src/app-routes.tsx),
// from the same answers the API gives; the browser hydrates the markup (src/main.tsx).
import { QueryClient, QueryClientProvider } from '@tanstack/react-query'
import { StrictMode } from 'react'
import { renderToString } from 'react-dom/server'
import { createStaticHandler, createStaticRouter, StaticRouterProvider } from 'react-router'
import type { PlanVersionsResponse, PlanView, SessionResponse } from '../shared/api-types.ts'
import { appRoutes } from './app-routes.tsx'
import { rateTablesEndId } from './components/plan-body.tsx'
import { pageDataScript, seedQueries } from './page-data.ts'

export interface PlanPageInput {
  /** The page's URL, e.g. http://host/plans/12. */
  url: string
  planId: string
  session: SessionResponse
  /** The plan's JSON as GET /api/plans/:id answers it. */
  planJson: string
  versions: PlanVersionsResponse
}

export interface RenderedPage {
  /** What goes at the end of <head>. */
  head: string
  /** The markup that goes inside #root. */
  root: string
  /** The page's data element, placed after #root. */
  data: string
}

/**
 * The markup of a plan page for this user and plan, and the data element the browser hydrates it
 * from. Null when the route does not end at the plan page (a redirect, another route, an error in
 * a loader): the caller answers the page the browser renders itself. Throws what rendering throws.
 */
export async function renderPlanPage(input: PlanPageInput): Promise<RenderedPage | null> {
  // a cache per request: nothing of one user's page may reach another's
  const queryClient = new QueryClient({ defaultOptions: { queries: { refetchOnWindowFocus: false, retry: false } } })
  seedQueries(queryClient, { session: input.session, planId: input.planId, versions: input.versions, router: {} }, JSON.parse(input.planJson) as PlanView)
  const handler = createStaticHandler(appRoutes(queryClient))
  const context = await handler.query(new Request(input.url))
  if (context instanceof Response) return null
  if (context.errors || context.matches.at(-1)?.route.id !== 'plan') return null
  const router = createStaticRouter(handler.dataRoutes, context)
  const root = renderToString(
    <StrictMode>
      <QueryClientProvider client={queryClient}>
        {/* hydrate={false}: no inline script; the router's state travels in the data element */}
        <StaticRouterProvider router={router} context={context} hydrate={false} />
      </QueryClientProvider>
    </StrictMode>,
  )
  return {
    // no frame until the rate tables are parsed: the browser would otherwise lay out the growing
    // table once per frame while the page arrives, several times over for a long plan (one layout
    // of a 200-field plan's tables costs 150-300 ms); once they are in, the page shows at once
    head: `<link rel="expect" href="#${rateTablesEndId}" blocking="render">`,
    root,
    data: pageDataScript({
      session: input.session,
      planId: input.planId,
      versions: input.versions,
      router: { loaderData: context.loaderData, actionData: context.actionData, errors: context.errors },
    }),
  }
}
