import { Link } from 'react-router'
import { ApiError } from '../api/client.ts'
import { Problem } from './layout.tsx'

/** What a page shows when its data could not be loaded. */
export function QueryProblem({ error, what }: { error: unknown; what: string }) {
  if (error instanceof ApiError && error.status === 401) {
    return (
      <Problem title="Your session has ended" message="Sign in again to go on.">
        <p className="mt-3">
          <Link to={`/sign-in?next=${encodeURIComponent(location.pathname)}`} className="font-semibold text-accent underline">
            Sign in
          </Link>
        </p>
      </Problem>
    )
  }
  if (error instanceof ApiError && error.status === 404) {
    return (
      <Problem title="Not found" message={`There is nothing here that you can see (${error.message}).`}>
        <p className="mt-3">
          <Link to="/farms" className="font-semibold text-accent underline">
            Back to the farms
          </Link>
        </p>
      </Problem>
    )
  }
  return <Problem title={`Could not load ${what}`} message={error instanceof Error ? error.message : 'Try again in a moment.'} />
}
