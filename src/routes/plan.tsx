import { useQuery } from '@tanstack/react-query'
import { lazy, Suspense } from 'react'
import { Link, useParams } from 'react-router'
import type { PlanView } from '../../shared/api-types.ts'
import { planQueryOptions, planVersionsQueryOptions } from '../api/queries.ts'
import { dateTime, fmt } from '../components/format.ts'
import { Loading } from '../components/layout.tsx'
import { PlanBody } from '../components/plan-body.tsx'
import { QueryProblem } from '../components/query-problem.tsx'

// the engine and its reference tables load only when a plan page opens
const WhatIf = lazy(() => import('../components/what-if.tsx'))

function Versions({ plan }: { plan: PlanView }) {
  const versions = useQuery(planVersionsQueryOptions(String(plan.id)))
  return (
    <section aria-labelledby="versions-title" className="no-print">
      <h2 id="versions-title" className="mb-3 text-xl font-semibold">Versions</h2>
      {versions.isPending ? (
        <Loading what="versions" />
      ) : versions.isError ? (
        <p>Could not load the versions.</p>
      ) : (
        <ul className="divide-y divide-line rounded-md border border-line bg-surface">
          {versions.data.versions.map((v) => (
            <li key={v.id} className="flex flex-wrap items-baseline justify-between gap-2 px-4 py-2">
              {v.id === plan.id ? (
                <span className="font-semibold" aria-current="page">
                  Season {v.season}, version {v.version} (this one)
                </span>
              ) : (
                <Link to={`/plans/${v.id}`} className="text-accent underline underline-offset-4">
                  Season {v.season}, version {v.version}
                </Link>
              )}
              <span className="text-sm text-muted">
                {v.fields} fields, <span className="num">{fmt(v.acres, 1)}</span> ac · {dateTime(v.created_at)} · {v.created_by}
              </span>
            </li>
          ))}
        </ul>
      )}
    </section>
  )
}

export function PlanHeading({ plan }: { plan: PlanView }) {
  return (
    <div className="no-print">
      <h1 className="text-2xl font-semibold">
        {plan.farm.name}: plan for {plan.season}
      </h1>
      <p className="text-muted">
        Version {plan.version} · plan {plan.id}
        {plan.farm.operator_name && ` · ${plan.farm.operator_name}`}
      </p>
    </div>
  )
}

export function PrintButton() {
  return (
    <button type="button" onClick={() => window.print()} className="no-print rounded-md border border-ink bg-surface px-3 py-1.5 font-semibold hover:bg-accent-soft">
      Print for the applicator
    </button>
  )
}

export default function Plan() {
  const { id = '' } = useParams()
  const plan = useQuery(planQueryOptions(id))
  if (plan.isPending) return <Loading what="the plan" />
  if (plan.isError) return <QueryProblem error={plan.error} what="the plan" />
  const p = plan.data
  return (
    <div className="space-y-6">
      <p className="no-print text-sm text-muted">
        <Link to="/farms" className="text-accent underline underline-offset-4">Farms</Link> /{' '}
        <Link to={`/farms/${encodeURIComponent(p.farm.code)}`} className="text-accent underline underline-offset-4">{p.farm.code}</Link> / plan {p.id}
      </p>
      <div className="flex flex-wrap items-start justify-between gap-3">
        <PlanHeading plan={p} />
        <PrintButton />
      </div>
      <PlanBody
        plan={p}
        whatIf={
          (p.result.fields ?? []).length > 0 && (
            <Suspense fallback={<Loading what="the rate sandbox" />}>
              <WhatIf plan={p} />
            </Suspense>
          )
        }
        versions={<Versions plan={p} />}
      />
    </div>
  )
}
