/**
 * `npm run test:stress` sets PITSIDE_STRESS=10; the reliability tests multiply their counts by it.
 * The fast tier (plain `npm test`) runs with factor 1.
 */
export const stressFactor = Math.max(1, Number(process.env.PITSIDE_STRESS ?? '1') || 1)

/** `count` runs in the fast tier, ten times as many under `npm run test:stress`. */
export function scaled(count: number): number {
  return Math.round(count * stressFactor)
}

/** A per-test timeout that grows with the stress factor. */
export function scaledTimeout(ms: number): number {
  return ms * stressFactor
}
