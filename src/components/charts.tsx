import type { AnalyteKey, PlanField, SeasonTrend } from '../../shared/api-types.ts'
import { useSyncExternalStore } from 'react'
import { fmt, label, num, nutrientColours, nutrients } from './format.ts'

const narrowQuery = '(max-width: 640px)'
const subscribeNarrow = (onChange: () => void) => {
  const m = window.matchMedia(narrowQuery)
  m.addEventListener('change', onChange)
  return () => m.removeEventListener('change', onChange)
}
const narrowNow = () => window.matchMedia(narrowQuery).matches
// the server renders the wide page; a phone hydrates that, then switches
const narrowOnServer = () => false

/** True on a phone-sized screen, so charts draw with fewer, larger units instead of shrinking. */
export function useNarrow(): boolean {
  return useSyncExternalStore(subscribeNarrow, narrowNow, narrowOnServer)
}

function niceStep(max: number, ticks: number): number {
  const raw = max / ticks
  const pow = 10 ** Math.floor(Math.log10(raw || 1))
  const m = raw / pow
  return (m <= 1 ? 1 : m <= 2 ? 2 : m <= 2.5 ? 2.5 : m <= 5 ? 5 : 10) * pow
}

/**
 * Supply against need per field: one bar per nutrient for what the manure supplies (available,
 * lb/ac), a black tick for the need. Plain SVG; the same numbers are in the field table.
 */
export function SupplyChart({ fields, caption }: { fields: PlanField[]; caption: string }) {
  const narrow = useNarrow()
  const rowH = 11
  const groupGap = 14
  const labelW = narrow ? 64 : 96
  const width = narrow ? 360 : 640
  const plotW = width - labelW - 16
  const values = fields.flatMap((f) => nutrients.flatMap((k) => [num(f.supplied?.[k]), num(f.need?.[k])])).filter((v): v is number => v !== null)
  const top = Math.max(1, ...values)
  const step = niceStep(top, narrow ? 3 : 5)
  const max = Math.ceil(top / step) * step
  const x = (v: number) => labelW + (Math.max(0, v) / max) * plotW
  const groupH = nutrients.length * rowH + groupGap
  const height = 28 + fields.length * groupH + 8
  const ticks = Array.from({ length: Math.round(max / step) + 1 }, (_, i) => i * step)
  return (
    <figure className="m-0">
      <svg viewBox={`0 0 ${width} ${height}`} width="100%" role="img" aria-label={caption} className="max-w-3xl">
        {ticks.map((t) => (
          <g key={t}>
            <line x1={x(t)} x2={x(t)} y1={20} y2={height - 6} stroke="var(--color-line)" strokeWidth={1} />
            <text x={x(t)} y={14} fontSize={10} textAnchor="middle" fill="var(--color-muted)" fontFamily="var(--font-mono)">
              {fmt(t)}
            </text>
          </g>
        ))}
        {fields.map((f, i) => {
          const y0 = 26 + i * groupH
          return (
            <g key={f.field}>
              <text x={labelW - 8} y={y0 + (nutrients.length * rowH) / 2 + 4} fontSize={12} textAnchor="end" fill="var(--color-ink)" fontWeight={600}>
                {f.field}
              </text>
              {nutrients.map((k, j) => {
                const supplied = num(f.supplied?.[k])
                const need = num(f.need?.[k])
                const y = y0 + j * rowH
                return (
                  <g key={k}>
                    {supplied !== null && (
                      <rect x={labelW} y={y + 1} width={Math.max(0, x(supplied) - labelW)} height={rowH - 3} fill={nutrientColours[k]} />
                    )}
                    {need !== null && <rect x={x(need) - 1.5} y={y - 1} width={3} height={rowH + 1} fill="var(--color-ink)" />}
                  </g>
                )
              })}
            </g>
          )
        })}
      </svg>
      <figcaption className="mt-2 flex flex-wrap items-center gap-x-4 gap-y-1 text-sm text-muted">
        {nutrients.map((k) => (
          <span key={k} className="inline-flex items-center gap-1">
            <span aria-hidden className="inline-block h-3 w-5" style={{ background: nutrientColours[k] }} />
            {label(k)} supplied
          </span>
        ))}
        <span className="inline-flex items-center gap-1">
          <span aria-hidden className="inline-block h-4 w-[3px] bg-ink" /> need
        </span>
        <span>lb/ac; the field table has every figure</span>
      </figcaption>
    </figure>
  )
}

const trendKeys: { key: AnalyteKey; name: string }[] = [
  { key: 'total_n', name: 'Total N' },
  { key: 'ammonium_n', name: 'Ammonium-N' },
  { key: 'p2o5', name: 'P₂O₅' },
  { key: 'k2o', name: 'K₂O' },
]

/** Season means with their lowest and highest sample, one small panel per nutrient. */
export function TrendChart({ seasons, unit, storage }: { seasons: SeasonTrend[]; unit: string; storage: string }) {
  const w = 200
  const h = 120
  const pad = { l: 34, r: 16, t: 20, b: 22 }
  if (seasons.length === 0) return null
  return (
    <div className="grid grid-cols-2 gap-3">
      {trendKeys.map(({ key, name }) => {
        const points = seasons.map((s) => ({ season: s.season, ...s.values[key] }))
        const highs = points.map((p) => p.max ?? p.mean ?? 0)
        const top = Math.max(1, ...highs)
        const step = niceStep(top, 3)
        const max = Math.ceil(top / step) * step
        const x = (i: number) => pad.l + (seasons.length === 1 ? (w - pad.l - pad.r) / 2 : (i * (w - pad.l - pad.r)) / (seasons.length - 1))
        const y = (v: number) => pad.t + (1 - v / max) * (h - pad.t - pad.b)
        const line = points
          .map((p, i) => (p.mean === null ? null : `${x(i)},${y(p.mean)}`))
          .filter(Boolean)
          .join(' ')
        const summary = points.map((p) => `${p.season}: ${fmt(p.mean, 1)}`).join(', ')
        return (
          <svg key={key} viewBox={`0 0 ${w} ${h}`} width="100%" role="img" aria-label={`${name} of ${storage} by season, mean ${unit}: ${summary}`}>
            <text x={pad.l} y={12} fontSize={12} fontWeight={600} fill="var(--color-ink)">
              {name}
            </text>
            {Array.from({ length: Math.round(max / step) + 1 }, (_, i) => i * step).map((t) => (
              <g key={t}>
                <line x1={pad.l} x2={w - pad.r} y1={y(t)} y2={y(t)} stroke="var(--color-line)" />
                <text x={pad.l - 4} y={y(t) + 3} fontSize={10} textAnchor="end" fill="var(--color-muted)" fontFamily="var(--font-mono)">
                  {fmt(t, t < 10 && t % 1 ? 1 : 0)}
                </text>
              </g>
            ))}
            <polyline points={line} fill="none" stroke="var(--color-accent)" strokeWidth={1.5} />
            {points.map((p, i) => (
              <g key={p.season}>
                {p.min !== null && p.max !== null && (
                  <line x1={x(i)} x2={x(i)} y1={y(p.min)} y2={y(p.max)} stroke="var(--color-ink)" strokeWidth={1.5} />
                )}
                {p.mean !== null && <circle cx={x(i)} cy={y(p.mean)} r={3.5} fill="var(--color-accent)" />}
                <text x={x(i)} y={h - 6} fontSize={10} textAnchor="middle" fill="var(--color-muted)" fontFamily="var(--font-mono)">
                  {p.season}
                </text>
              </g>
            ))}
          </svg>
        )
      })}
    </div>
  )
}

/** One budget line: how much is used of what there is (manure in storage, acres available). */
export function BudgetBar({ used, available, usedLabel, availableLabel, unit, overMessage }: { used: number | null; available: number | null; usedLabel: string; availableLabel: string; unit: string; overMessage: string }) {
  const u = used ?? 0
  const a = available ?? 0
  const max = Math.max(u, a, 1)
  const over = available !== null && used !== null && used > available
  return (
    <div>
      <div className="relative h-4 w-full rounded-sm bg-accent-soft ring-1 ring-line" aria-hidden>
        <div className="absolute inset-y-0 left-0 rounded-sm bg-accent" style={{ width: `${(Math.min(u, a || u) / max) * 100}%` }} />
        {over && <div className="absolute inset-y-0 rounded-r-sm bg-danger" style={{ left: `${(a / max) * 100}%`, width: `${((u - a) / max) * 100}%` }} />}
        {available !== null && <div className="absolute -inset-y-1 w-0.5 bg-ink" style={{ left: `calc(${(a / max) * 100}% - 1px)` }} />}
      </div>
      <p className="mt-1 flex flex-wrap justify-between gap-x-4 text-sm">
        <span>
          {usedLabel} <span className="num font-semibold">{fmt(used)}</span> {unit}
        </span>
        <span>
          {availableLabel} <span className="num font-semibold">{fmt(available)}</span> {unit}
        </span>
      </p>
      {over && <p className="text-sm font-semibold text-danger">{overMessage}</p>}
    </div>
  )
}
