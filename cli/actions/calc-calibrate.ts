import { computeCalibrationSetting, computeLoadAreaRate, computeSheetRate } from '../../shared/calibration.ts'
import type { ActionModule } from '../lazy.ts'
import { printJson } from '../output.ts'
import { fmt } from './calc-format.ts'
import { calibrationFileSchema, inputName, parseJsonInput, readInputText } from './calc-input.ts'

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const file = inputName(options.input as string)
  const c = parseJsonInput(await readInputText(options.input as string), file, calibrationFileSchema)
  const us = c.units === 'us'
  const area = us ? 'ac' : 'ha'
  if (c.method === 'load_area') {
    const r = computeLoadAreaRate({ load: c.load, length: c.length, width: c.width, units: c.units })
    const unit = `${c.form === 'liquid' ? (us ? 'gal' : 'L') : us ? 'ton' : 't'}/${area}`
    if (g.json) return printJson({ method: c.method, units: c.units, area: round(r.area, 4), rate: round(r.rate, 2), rate_unit: unit })
    process.stdout.write(
      `${file}: load-area method\nArea covered: ${fmt(r.area, 3)} ${area}\nRate: ${fmt(r.rate, 1)} ${unit}\nUse the effective swath (with overlap); a "full" tank often holds about 90 % of its rated capacity.\n`,
    )
    return
  }
  if (c.method === 'sheet') {
    const r = computeSheetRate({ caught: c.caught, sheetArea: c.sheet_area, units: c.units })
    const unit = us ? 'ton/ac' : 't/ha'
    if (g.json) return printJson({ method: c.method, units: c.units, rate: round(r.rate, 2), per_sheet: r.perSheet.map((x) => round(x, 2)), rate_unit: unit })
    process.stdout.write(
      `${file}: sheet method, ${r.perSheet.length} sheet(s)\nPer sheet: ${r.perSheet.map((x) => fmt(x, 2)).join(', ')} ${unit}\nRate (mean): ${fmt(r.rate, 2)} ${unit}\n`,
    )
    return
  }
  const r = computeCalibrationSetting({
    targetRate: c.target_rate,
    width: c.width,
    units: c.units,
    ...(c.speed !== undefined && { speed: c.speed }),
    ...(c.discharge_per_min !== undefined && { dischargePerMin: c.discharge_per_min }),
  })
  const amount = c.form === 'liquid' ? (us ? 'gal' : 'L') : us ? 'ton' : 't'
  const speedUnit = us ? 'mph' : 'km/h'
  if (g.json) {
    return printJson({ method: c.method, units: c.units, speed: round(r.speed, 2), speed_unit: speedUnit, discharge_per_min: round(r.dischargePerMin, 2), discharge_unit: `${amount}/min`, area_per_hour: round(r.areaPerHour, 2) })
  }
  process.stdout.write(
    `${file}: setting for ${fmt(c.target_rate)} ${amount}/${area} over ${fmt(c.width)} ${us ? 'ft' : 'm'}\nSpeed: ${fmt(r.speed, 2)} ${speedUnit}\nDischarge: ${fmt(r.dischargePerMin, 1)} ${amount}/min\nCoverage: ${fmt(r.areaPerHour, 2)} ${area}/h\n`,
  )
}

function round(x: number, digits: number) {
  const f = 10 ** digits
  return Math.round(x * f) / f
}
