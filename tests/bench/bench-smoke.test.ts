import { execa } from 'execa'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'

// The benchmark itself is never part of the tests and never judged on timing; this only checks
// that `npm run bench` still runs end to end, on tiny data, and prints every figure as a number.
const script = fileURLToPath(new URL('../../scripts/bench.mjs', import.meta.url))

const figures = [
  'import_ratio',
  'import_peak_rss_mb',
  'plan_ratio',
  'plan_seconds',
  'api_ratio',
  'api_p99_ms',
  'api_errors',
  'startup_ratio',
  'bundle_gzip_kb',
  'plan_render_ms',
]

describe('npm run bench', () => {
  it('runs every benchmark on tiny data and prints each figure as a number in one JSON object', async () => {
    const r = await execa('node', [script, '--json'], {
      reject: false,
      env: { PITSIDE_BENCH_SIZE: 'tiny', NO_COLOR: '1' },
      timeout: 240_000,
    })
    expect(r.stderr).not.toMatch(/could not be measured/)
    expect(r.exitCode).toBe(0)
    const out = JSON.parse(r.stdout) as Record<string, unknown>
    for (const key of figures) {
      expect(typeof out[key], key).toBe('number')
      expect(Number.isFinite(out[key] as number), key).toBe(true)
    }
    expect(out.failures).toEqual([])
  }, 300_000)
})
