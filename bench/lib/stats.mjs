// Medians and spreads of repeated measurements.

export function median(values) {
  if (values.length === 0) return NaN
  const s = [...values].sort((a, b) => a - b)
  const mid = s.length >> 1
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2
}

/** Median, lowest and highest value, and the spread (highest − lowest) as a fraction of the median. */
export function summarize(values) {
  const m = median(values)
  const min = Math.min(...values)
  const max = Math.max(...values)
  return { median: m, min, max, spread: m === 0 ? 0 : (max - min) / Math.abs(m), n: values.length }
}

export function round(x, digits = 3) {
  if (!Number.isFinite(x)) return x
  const f = 10 ** digits
  return Math.round(x * f) / f
}

/**
 * Runs the two sides of a ratio interleaved (a, b, a, b, …) so that both see the same machine
 * state; the first `warmup` pairs are run and thrown away. Each side returns a measurement object;
 * `ratio(a, b)` turns one pair into a number. Returns every measured pair and the ratios.
 */
export async function interleave({ runs, warmup, a, b, ratio, onPair }) {
  const pairs = []
  for (let i = 0; i < warmup + runs; i++) {
    // alternate which side goes first, so neither always gets the warmer cache
    const first = i % 2 === 0
    const ra = first ? await a(i) : null
    const rb = await b(i)
    const ra2 = first ? ra : await a(i)
    const pair = { a: ra2, b: rb, ratio: ratio(ra2, rb), warmup: i < warmup }
    onPair?.(pair, i)
    if (!pair.warmup) pairs.push(pair)
  }
  return { pairs, ratios: pairs.map((p) => p.ratio) }
}
