import { useQuery } from '@tanstack/react-query'
import { useParams } from 'react-router'
import { ApiError } from '../api/client.ts'
import { sharedPlanQueryOptions } from '../api/queries.ts'
import { Cautions } from '../components/cautions.tsx'
import { date } from '../components/format.ts'
import { Brand, Loading, Problem } from '../components/layout.tsx'
import { PlanBody } from '../components/plan-body.tsx'
import { PlanHeading, PrintButton } from './plan.tsx'

export default function SharedPlan() {
  const { token = '' } = useParams()
  const shared = useQuery(sharedPlanQueryOptions(token))
  return (
    <div className="min-h-screen">
      <header className="no-print border-b border-line bg-surface">
        <div className="mx-auto flex max-w-6xl items-center justify-between px-4 py-3">
          <Brand />
          <span className="text-sm text-muted">Shared plan, read only</span>
        </div>
      </header>
      <main id="main" className="mx-auto max-w-6xl space-y-6 px-4 py-6 print:max-w-none print:p-0">
        {shared.isPending ? (
          <Loading what="the shared plan" />
        ) : shared.isError ? (
          <div className="space-y-6">
            <Problem
              title="This link cannot be opened"
              message={shared.error instanceof ApiError ? shared.error.message : 'The plan could not be loaded. Try again in a moment.'}
            />
            <Cautions />
          </div>
        ) : (
          <>
            <p className="no-print rounded-md border border-line bg-accent-soft px-4 py-2 text-sm">
              Your advisor shared this plan with you. The link works until {date(shared.data.expires_at)}; do not pass it on.
            </p>
            <div className="flex flex-wrap items-start justify-between gap-3">
              <PlanHeading plan={shared.data.plan} />
              <PrintButton />
            </div>
            <PlanBody plan={shared.data.plan} />
          </>
        )}
      </main>
    </div>
  )
}
