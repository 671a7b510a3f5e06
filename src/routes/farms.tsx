import { useQuery } from '@tanstack/react-query'
import { Link } from 'react-router'
import { farmsQueryOptions } from '../api/queries.ts'
import { fmt } from '../components/format.ts'
import { Loading } from '../components/layout.tsx'
import { QueryProblem } from '../components/query-problem.tsx'

export default function Farms() {
  const farms = useQuery(farmsQueryOptions())
  if (farms.isPending) return <Loading what="farms" />
  if (farms.isError) return <QueryProblem error={farms.error} what="the farms" />
  const list = farms.data.farms
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-semibold">Farms</h1>
      {list.length === 0 ? (
        <p>No farms to show yet.</p>
      ) : (
        <div className="overflow-x-auto rounded-md border border-line bg-surface">
          <table className="data">
            <caption className="sr-only">Farms you can see, with their latest plan</caption>
            <thead>
              <tr>
                <th scope="col">Farm</th>
                <th scope="col">Operator</th>
                <th scope="col" className="num">Storages<span className="unit">count</span></th>
                <th scope="col" className="num">Fields<span className="unit">count</span></th>
                <th scope="col" className="num">Area<span className="unit">ac</span></th>
                <th scope="col">Latest plan</th>
              </tr>
            </thead>
            <tbody>
              {list.map((f) => (
                <tr key={f.code}>
                  <th scope="row" className="text-left">
                    <Link to={`/farms/${encodeURIComponent(f.code)}`} className="font-semibold text-accent underline underline-offset-4">
                      {f.name}
                    </Link>
                    <span className="ml-2 font-mono text-xs text-muted">{f.code}</span>
                  </th>
                  <td>{f.operator_name ?? '—'}</td>
                  <td className="num">{fmt(f.storages)}</td>
                  <td className="num">{fmt(f.fields)}</td>
                  <td className="num">{fmt(f.acres, 1)}</td>
                  <td>
                    {f.latest_plan ? (
                      <Link to={`/plans/${f.latest_plan.id}`} className="text-accent underline underline-offset-4">
                        {f.latest_plan.season}, version {f.latest_plan.version}
                      </Link>
                    ) : (
                      <span className="text-muted">none yet</span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  )
}
