import type { QueryClient } from '@tanstack/react-query'
import type { HydrationState } from 'react-router'
import type { PlanVersionsResponse, PlanView, SessionResponse } from '../shared/api-types.ts'
import { planQueryOptions, planVersionsQueryOptions, sessionQueryOptions } from './api/queries.ts'

/**
 * What a server-rendered page was rendered from, sent beside its markup so that the browser starts
 * from the same answers (and hydrates the same page). Each answer is exactly what its API path
 * returns. The plan itself is not in it: it is three quarters of a long plan's page and the first
 * paint does not need it (the markup has it), so the browser fetches it (`/api/plans/:id`, asked for
 * by the page's Link header while the HTML arrives) and hydrates once it is there.
 */
export interface PageData {
  session: SessionResponse
  /** The plan id as it appears in the page's path. */
  planId: string
  versions: PlanVersionsResponse
  /** The router's loader data of the server's render (createBrowserRouter's hydrationData). */
  router: HydrationState
}

/** The id of the `<script type="application/json">` element that holds the page's data. */
export const pageDataId = 'pitside-page-data'

// JSON may hold any text; in a <script> element "</script>", "<!--" and the line separators must not
// appear as such. Escaped as JSON escapes, JSON.parse reads the same value back.
const unsafe: Record<string, string> = { '<': '\\u003c', '>': '\\u003e', '&': '\\u0026', '\u2028': '\\u2028', '\u2029': '\\u2029' }

/** JSON text made safe to place inside a `<script>` element (the same value for JSON.parse). */
export function escapeJsonForScript(json: string): string {
  return json.replace(/[<>&\u2028\u2029]/g, (c) => unsafe[c]!)
}

/** The data element of a page. Not executable: the CSP allows no inline script. */
export function pageDataScript(data: PageData): string {
  return `<script type="application/json" id="${pageDataId}">${escapeJsonForScript(JSON.stringify(data))}</script>`
}

/** The page's data when the server rendered it, else null (a page the browser renders itself). */
export function readPageData(doc: Document): PageData | null {
  const text = doc.getElementById(pageDataId)?.textContent
  if (!text) return null
  try {
    return JSON.parse(text) as PageData
  } catch {
    return null
  }
}

/**
 * Puts a page's answers into a query cache under the keys the pages ask for them with
 * (src/api/queries.ts): those of the data element, and the plan when it is given (the server has it;
 * the browser fetches it, see PageData).
 */
export function seedQueries(queryClient: QueryClient, data: PageData, plan?: PlanView): void {
  queryClient.setQueryData(sessionQueryOptions().queryKey, data.session)
  queryClient.setQueryData(planVersionsQueryOptions(data.planId).queryKey, data.versions)
  if (plan) queryClient.setQueryData(planQueryOptions(data.planId).queryKey, plan)
}
