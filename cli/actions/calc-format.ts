/** Number formatting for the calculator's readable summaries (results go to stdout). */
export function fmt(x: number | null | undefined, digits = 2): string {
  if (x === null || x === undefined) return '—'
  return x.toLocaleString('en-US', { maximumFractionDigits: digits, minimumFractionDigits: 0 })
}

/** The cautions every readable result carries. */
export const cautions = [
  'Advisory only: check against local regulations and the field’s certified nutrient management plan.',
  'Never enter a manure storage. Agitation releases hydrogen sulfide, which can kill within minutes; ventilate and keep people and animals away.',
  'Keep setbacks from wells, tile inlets and surface water; do not spread on frozen, snow-covered or saturated ground.',
]
