import { AppError } from './errors.ts'

/** ln Γ(x) by the Lanczos approximation (g = 7, n = 9), accurate to ~15 digits for x > 0. */
function logGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
    12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
  ]
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x)
  x -= 1
  let a = c[0]!
  const t = x + 7.5
  for (let i = 1; i < 9; i++) a += c[i]! / (x + i)
  return 0.5 * Math.log(2 * Math.PI) + (x + 0.5) * Math.log(t) - t + Math.log(a)
}

/** Continued fraction for the regularized incomplete beta (modified Lentz). */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const tiny = 1e-300
  let c = 1
  let d = 1 - ((a + b) * x) / (a + 1)
  if (Math.abs(d) < tiny) d = tiny
  d = 1 / d
  let h = d
  for (let m = 1; m <= 300; m++) {
    const m2 = 2 * m
    let aa = (m * (b - m) * x) / ((a + m2 - 1) * (a + m2))
    d = 1 + aa * d
    if (Math.abs(d) < tiny) d = tiny
    c = 1 + aa / c
    if (Math.abs(c) < tiny) c = tiny
    d = 1 / d
    h *= d * c
    aa = (-(a + m) * (a + b + m) * x) / ((a + m2) * (a + m2 + 1))
    d = 1 + aa * d
    if (Math.abs(d) < tiny) d = tiny
    c = 1 + aa / c
    if (Math.abs(c) < tiny) c = tiny
    d = 1 / d
    const delta = d * c
    h *= delta
    if (Math.abs(delta - 1) < 1e-15) break
  }
  return h
}

/** Regularized incomplete beta I_x(a, b). */
function incompleteBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0
  if (x >= 1) return 1
  const front = Math.exp(logGamma(a + b) - logGamma(a) - logGamma(b) + a * Math.log(x) + b * Math.log(1 - x))
  return x < (a + 1) / (a + b + 2) ? (front * betaContinuedFraction(a, b, x)) / a : 1 - (front * betaContinuedFraction(b, a, 1 - x)) / b
}

/** Cumulative Student t distribution P(T ≤ t) with df degrees of freedom. */
export function studentTCdf(t: number, df: number): number {
  const x = df / (df + t * t)
  const tail = 0.5 * incompleteBeta(x, df / 2, 0.5)
  return t >= 0 ? 1 - tail : tail
}

/**
 * The Student t quantile: the t with P(T ≤ t) = p for df degrees of freedom, found by bisection
 * on the exact CDF (regularized incomplete beta). Two-sided 90 % intervals use p = 0.95.
 * Checked against the NIST/SEMATECH e-Handbook t table. Throws AppError('invalid_input') for
 * p outside (0, 1) or df ≤ 0.
 */
export function studentTQuantile(p: number, df: number): number {
  if (!(p > 0 && p < 1)) throw new AppError('invalid_input', `expected a probability between 0 and 1, found ${p}`)
  if (!(df > 0)) throw new AppError('invalid_input', `expected degrees of freedom above 0, found ${df}`)
  if (p === 0.5) return 0
  if (p < 0.5) return -studentTQuantile(1 - p, df)
  let lo = 0
  let hi = 1
  while (studentTCdf(hi, df) < p) hi *= 2
  for (let i = 0; i < 200 && hi - lo > 1e-12 * Math.max(1, hi); i++) {
    const mid = (lo + hi) / 2
    if (studentTCdf(mid, df) < p) lo = mid
    else hi = mid
  }
  return (lo + hi) / 2
}

export interface SampleStats {
  n: number
  mean: number
  /** Sample standard deviation (n − 1); null with one sample. */
  sd: number | null
  /** Coefficient of variation sd ÷ mean; null with one sample or a zero mean. */
  cv: number | null
  min: number
  max: number
  confidence: number
  /** Two-sided interval for the mean: mean ± t × sd ÷ √n; null with one sample. */
  interval: { low: number; high: number; halfWidth: number; t: number } | null
}

/**
 * Summary of several analyses of one storage (cores, access points, dates): n, mean, sample
 * standard deviation, coefficient of variation and a two-sided Student-t confidence interval
 * for the mean (90 % unless given). Same unit as the values. Throws AppError('invalid_input')
 * for no values or a value that is not a finite number.
 */
export function computeSampleStats(values: readonly number[], confidence = 0.9): SampleStats {
  if (values.length === 0) throw new AppError('invalid_input', 'values: give at least one sample value')
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new AppError('invalid_input', `values.${i}: expected a number, found ${v}`)
  })
  if (!(confidence > 0 && confidence < 1)) throw new AppError('invalid_input', `confidence: expected a fraction between 0 and 1, found ${confidence}`)
  const n = values.length
  const mean = values.reduce((s, v) => s + v, 0) / n
  const min = Math.min(...values)
  const max = Math.max(...values)
  if (n < 2) return { n, mean, sd: null, cv: null, min, max, confidence, interval: null }
  const sd = Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1))
  const t = studentTQuantile(1 - (1 - confidence) / 2, n - 1)
  const halfWidth = (t * sd) / Math.sqrt(n)
  return { n, mean, sd, cv: mean !== 0 ? sd / Math.abs(mean) : null, min, max, confidence, interval: { low: mean - halfWidth, high: mean + halfWidth, halfWidth, t } }
}

/**
 * The number of samples needed so that the confidence interval's half-width is at most
 * `relativePrecision` × mean, for a coefficient of variation cv: the smallest n with
 * t(n − 1) × cv ÷ √n ≤ relativePrecision (Student t, two-sided). At least 2.
 * Throws AppError('invalid_input') for cv < 0, precision ≤ 0 or confidence outside (0, 1).
 */
export function computeSamplesNeeded(cv: number, relativePrecision: number, confidence = 0.9): number {
  if (!(cv >= 0)) throw new AppError('invalid_input', `cv: expected 0 or more, found ${cv}`)
  if (!(relativePrecision > 0)) throw new AppError('invalid_input', `precision: expected above 0, found ${relativePrecision}`)
  if (!(confidence > 0 && confidence < 1)) throw new AppError('invalid_input', `confidence: expected a fraction between 0 and 1, found ${confidence}`)
  const p = 1 - (1 - confidence) / 2
  for (let n = 2; n <= 100000; n++) {
    if ((studentTQuantile(p, n - 1) * cv) / Math.sqrt(n) <= relativePrecision) return n
  }
  throw new AppError('invalid_input', `more than 100000 samples would be needed for cv ${cv} at ±${relativePrecision * 100} %`)
}

/**
 * The band the sampling spread puts around a rate computed from the mean analysis: if the true
 * content is at the interval's high end, the same nutrient need is met by rate × mean ÷ high;
 * at the low end by rate × mean ÷ low (null when the low end is ≤ 0). At a fixed rate the
 * nutrients supplied range over × low ÷ mean to × high ÷ mean. Null interval → null band.
 * Never throws.
 */
export function computeRateBand(rate: number, stats: SampleStats): {
  rateLow: number
  rateHigh: number | null
  suppliedLowFraction: number
  suppliedHighFraction: number
} | null {
  if (!stats.interval || stats.mean <= 0) return null
  const { low, high } = stats.interval
  return {
    rateLow: (rate * stats.mean) / high,
    rateHigh: low > 0 ? (rate * stats.mean) / low : null,
    suppliedLowFraction: Math.max(0, low) / stats.mean,
    suppliedHighFraction: high / stats.mean,
  }
}
