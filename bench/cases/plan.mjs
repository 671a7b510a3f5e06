// plan_ratio and plan_seconds: `pitside plan --all` against a bare baseline (filled in below).
export async function benchPlan() {
  throw new Error('pitside plan is not available yet')
}
