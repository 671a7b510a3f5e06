import { AppError } from '../../shared/errors.ts'
import { computeRateBand, computeSamplesNeeded, computeSampleStats } from '../../shared/sampling.ts'
import type { ActionModule } from '../lazy.ts'
import { printJson } from '../output.ts'
import { fmt } from './calc-format.ts'
import { inputName, parseJsonInput, readInputText, samplesFileSchema, type SamplesFile } from './calc-input.ts'

function numberOption(name: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined
  const v = Number(text)
  if (!Number.isFinite(v)) throw new AppError('usage', `--${name}: expected a number, found "${text}"`)
  return v
}

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  let s: SamplesFile
  let source: string
  if (options.input !== undefined) {
    if (options.values !== undefined) throw new AppError('usage', 'give --input or --values, not both')
    source = inputName(options.input as string)
    s = parseJsonInput(await readInputText(options.input as string), source, samplesFileSchema)
  } else if (options.values !== undefined) {
    source = '--values'
    const parts = String(options.values).split(',').map((x) => x.trim()).filter((x) => x !== '')
    const values = parts.map((x, i) => {
      const v = Number(x)
      if (!Number.isFinite(v)) throw new AppError('usage', `--values: item ${i + 1} "${x}" is not a number`)
      return v
    })
    s = { values }
  } else throw new AppError('usage', 'give the values with --values 41,44,38 or a file with --input')
  const confidence = s.confidence ?? numberOption('confidence', options.confidence)!
  const precision = s.precision ?? numberOption('precision', options.precision)!
  const rate = s.rate ?? numberOption('rate', options.rate)
  const stats = computeSampleStats(s.values, confidence)
  const needed = stats.cv === null ? null : computeSamplesNeeded(stats.cv, precision, confidence)
  const band = rate === undefined ? null : computeRateBand(rate, stats)
  if (g.json) {
    printJson({
      n: stats.n,
      mean: stats.mean,
      sd: stats.sd,
      cv: stats.cv,
      min: stats.min,
      max: stats.max,
      confidence,
      interval: stats.interval && { low: stats.interval.low, high: stats.interval.high, half_width: stats.interval.halfWidth, t: stats.interval.t },
      precision,
      samples_needed: needed,
      rate: rate ?? null,
      rate_band: band && { low: band.rateLow, high: band.rateHigh, supplied_low_fraction: band.suppliedLowFraction, supplied_high_fraction: band.suppliedHighFraction },
    })
    return
  }
  const unit = s.unit ? ` ${s.unit}` : ''
  const lines = [`${source}: ${stats.n} sample(s)${s.label ? ` of ${s.label}` : ''}`, '']
  lines.push(`Mean ${fmt(stats.mean)}${unit}; range ${fmt(stats.min)} to ${fmt(stats.max)}`)
  if (stats.sd !== null) {
    lines.push(`Standard deviation ${fmt(stats.sd)}${unit}; coefficient of variation ${fmt((stats.cv ?? 0) * 100, 1)} %`)
    const i = stats.interval!
    lines.push(`${fmt(confidence * 100, 0)} % interval for the mean: ${fmt(i.low)} to ${fmt(i.high)}${unit} (± ${fmt(i.halfWidth)}, Student t ${fmt(i.t, 3)})`)
    if (needed !== null) lines.push(`Samples needed for ± ${fmt(precision * 100, 0)} % of the mean: ${needed}`)
  } else lines.push('One sample gives no spread: combine several cores from several access points to see the variability.')
  if (band) {
    lines.push(
      `Rate band: the same need is met by ${fmt(band.rateLow, 1)} to ${band.rateHigh === null ? 'an open upper end' : fmt(band.rateHigh, 1)} if the true content is at either end of the interval; at ${fmt(rate!)} the nutrients supplied range from ${fmt(band.suppliedLowFraction * 100, 0)} % to ${fmt(band.suppliedHighFraction * 100, 0)} % of the planned amount.`,
    )
  }
  lines.push('', 'Manure content varies from farm to farm and within one storage; combine several cores from several access points (common practice).')
  process.stdout.write(lines.join('\n') + '\n')
}
