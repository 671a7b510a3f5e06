import { useQuery } from '@tanstack/react-query'
import { Link, useParams } from 'react-router'
import { analyteKeys, type StorageView } from '../../shared/api-types.ts'
import { farmQueryOptions } from '../api/queries.ts'
import { TrendChart } from '../components/charts.tsx'
import { date, dateTime, fmt, label } from '../components/format.ts'
import { Loading } from '../components/layout.tsx'
import { QueryProblem } from '../components/query-problem.tsx'

const analyteNames: Record<(typeof analyteKeys)[number], string> = {
  dry_matter_pct: 'Dry matter',
  total_n: 'Total N',
  ammonium_n: 'NH₄-N',
  p2o5: 'P₂O₅',
  k2o: 'K₂O',
}

function StorageCard({ s }: { s: StorageView }) {
  const round = s.latest_round
  const per = s.analysis_unit
  return (
    <article className="rounded-md border border-line bg-surface p-4" aria-labelledby={`st-${s.code}`}>
      <h3 id={`st-${s.code}`} className="text-lg font-semibold">
        {s.code}
        {s.name && <span className="font-normal"> · {s.name}</span>}
      </h3>
      <p className="text-sm text-muted">
        {label(s.kind)} · {s.species} · {s.form}
        {s.current_amount !== null && (
          <>
            {' '}· in storage <span className="num">{fmt(s.current_amount)}</span> {s.capacity_unit} on {date(s.current_amount_on)}
          </>
        )}
        {s.capacity !== null && (
          <>
            {' '}of <span className="num">{fmt(s.capacity)}</span> {s.capacity_unit}
          </>
        )}
      </p>
      {round ? (
        <>
          <h4 className="mt-3 text-sm font-semibold">
            Latest sampling round, {round.from === round.to ? date(round.from) : `${date(round.from)} to ${date(round.to)}`} ({round.samples.length} sample
            {round.samples.length === 1 ? '' : 's'})
          </h4>
          <div className="mt-1 overflow-x-auto">
            <table className="data">
              <caption className="sr-only">Latest round of {s.code}: mean, lowest and highest sample, spread</caption>
              <thead>
                <tr>
                  <th scope="col">As-is</th>
                  <th scope="col" className="num">Mean</th>
                  <th scope="col" className="num">Lowest – highest</th>
                  <th scope="col" className="num">Spread<span className="unit">CV %</span></th>
                </tr>
              </thead>
              <tbody>
                {analyteKeys.map((k) => (
                  <tr key={k}>
                    <th scope="row" className="text-left font-normal">
                      {analyteNames[k]}
                      <span className="unit">{k === 'dry_matter_pct' ? '%' : per}</span>
                    </th>
                    <td className="num font-semibold">{fmt(round.values[k].mean, 1)}</td>
                    <td className="num">
                      {fmt(round.values[k].min, 1)} – {fmt(round.values[k].max, 1)}
                    </td>
                    <td className="num">{fmt(round.values[k].cv_pct, 0)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </>
      ) : (
        <p className="mt-3 text-sm">No lab results yet for this storage.</p>
      )}
      {s.seasons.length > 0 && (
        <>
          <h4 className="mt-4 text-sm font-semibold">By season: mean (dot) and lowest to highest sample (bar), {per}</h4>
          <div className="mt-1">
            <TrendChart seasons={s.seasons} unit={per} storage={s.code} />
          </div>
        </>
      )}
    </article>
  )
}

export default function Farm() {
  const { code = '' } = useParams()
  const farm = useQuery(farmQueryOptions(code))
  if (farm.isPending) return <Loading what="the farm" />
  if (farm.isError) return <QueryProblem error={farm.error} what="the farm" />
  const f = farm.data
  return (
    <div className="space-y-8">
      <div>
        <p className="text-sm text-muted">
          <Link to="/farms" className="text-accent underline underline-offset-4">Farms</Link> / {f.code}
        </p>
        <h1 className="text-2xl font-semibold">{f.name}</h1>
        <p className="text-muted">{[f.operator_name, f.region].filter(Boolean).join(' · ')}</p>
      </div>

      <section aria-labelledby="plans-title">
        <h2 id="plans-title" className="mb-3 text-xl font-semibold">Plans</h2>
        {f.plans.length === 0 ? (
          <p>No plans yet.</p>
        ) : (
          <ul className="divide-y divide-line rounded-md border border-line bg-surface">
            {f.plans.map((p, i) => (
              <li key={p.id} className="flex flex-wrap items-baseline justify-between gap-2 px-4 py-3">
                <Link to={`/plans/${p.id}`} className="font-semibold text-accent underline underline-offset-4">
                  Season {p.season}, version {p.version}
                </Link>
                <span className="text-sm text-muted">
                  {i === 0 ? 'latest · ' : ''}
                  {p.fields} fields, <span className="num">{fmt(p.acres, 1)}</span> ac · computed {dateTime(p.created_at)} by {p.created_by}
                </span>
              </li>
            ))}
          </ul>
        )}
      </section>

      <section aria-labelledby="storages-title">
        <h2 id="storages-title" className="mb-3 text-xl font-semibold">Storages</h2>
        <div className="grid gap-4 lg:grid-cols-2">
          {f.storages.map((s) => (
            <StorageCard key={s.code} s={s} />
          ))}
        </div>
      </section>

      <section aria-labelledby="fields-title">
        <h2 id="fields-title" className="mb-3 text-xl font-semibold">Fields</h2>
        <div className="overflow-x-auto rounded-md border border-line bg-surface">
          <table className="data">
            <caption className="sr-only">Fields of {f.name}</caption>
            <thead>
              <tr>
                <th scope="col">Field</th>
                <th scope="col" className="num">Area<span className="unit">ac</span></th>
                <th scope="col">Season · crop</th>
                <th scope="col" className="num">Yield goal<span className="unit">bu/ac or ton/ac</span></th>
                <th scope="col">Storage</th>
                <th scope="col">Method</th>
                <th scope="col" className="num">Soil P<span className="unit">ppm</span></th>
                <th scope="col" className="num">Soil K<span className="unit">ppm</span></th>
              </tr>
            </thead>
            <tbody>
              {f.fields.map((x) => (
                <tr key={x.code}>
                  <th scope="row" className="text-left">
                    {x.code}
                    {x.name && <span className="block text-xs font-normal text-muted">{x.name}</span>}
                  </th>
                  <td className="num">{fmt(x.acres, 1)}</td>
                  <td>{x.season ? `${x.season} · ${label(x.crop)}` : '—'}</td>
                  <td className="num">{fmt(x.yield_goal, x.yield_goal !== null && x.yield_goal < 40 ? 1 : 0)}</td>
                  <td>{x.storage ?? '—'}</td>
                  <td>{label(x.method)}</td>
                  <td className="num">
                    {fmt(x.soil_test?.p_ppm)}
                    {x.soil_test?.p_method && <span className="text-xs text-muted"> {x.soil_test.p_method}</span>}
                  </td>
                  <td className="num">{fmt(x.soil_test?.k_ppm)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </section>
    </div>
  )
}
