// The human table of `npm run bench`: one row per figure with its median, range and goal.
import Table from 'cli-table3'

function fmt(x) {
  if (x === null || x === undefined || Number.isNaN(x)) return '–'
  const a = Math.abs(x)
  return a >= 100 ? x.toFixed(0) : a >= 10 ? x.toFixed(1) : a >= 1 ? x.toFixed(2) : x.toFixed(3)
}

/** rows: { key, summary: {median, min, max, spread, n}, value?, goal, met, note } */
export function formatTable(rows) {
  const table = new Table({
    head: ['figure', 'value', 'median', 'min–max', 'spread', 'runs', 'goal', 'met', 'what'],
    style: { head: [], border: [] },
    colAligns: ['left', 'right', 'right', 'right', 'right', 'right', 'left', 'left', 'left'],
  })
  for (const r of rows) {
    const s = r.summary
    table.push([
      r.key,
      fmt(r.value ?? s.median),
      fmt(s.median),
      `${fmt(s.min)}–${fmt(s.max)}`,
      `${(s.spread * 100).toFixed(0)} %`,
      String(s.n),
      r.goal,
      r.met ? 'yes' : 'NO',
      r.note ?? '',
    ])
  }
  return table.toString()
}
