// A small seeded pseudo-random generator, so that every benchmark run writes the same invented data.

/** mulberry32: 32-bit state, good enough for invented test data (not for anything secret). */
export function makeRandom(seed) {
  let a = seed >>> 0
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  return {
    next,
    /** uniform in [low, high) */
    between: (low, high) => low + (high - low) * next(),
    /** integer in [low, high] */
    int: (low, high) => low + Math.floor((high - low + 1) * next()),
    pick: (list) => list[Math.floor(next() * list.length)],
    chance: (p) => next() < p,
  }
}

/** Rounds to `digits` decimals and writes it as a plain decimal (no exponent, no trailing zeros). */
export function decimal(x, digits) {
  return String(Math.round(x * 10 ** digits) / 10 ** digits)
}

/** A date string YYYY-MM-DD `days` after `startIso`. */
export function addDays(startIso, days) {
  const t = Date.parse(startIso + 'T00:00:00Z') + days * 86_400_000
  return new Date(t).toISOString().slice(0, 10)
}

export const pad = (n, width) => String(n).padStart(width, '0')
