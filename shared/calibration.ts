import { AppError } from './errors.ts'
import { unitDefinitions } from './units.ts'

const ft2PerAcre = unitDefinitions.ft2PerAcre.value
const lbPerTon = unitDefinitions.lbPerShortTon.value
const m2PerHa = unitDefinitions.m2PerHa.value
const ftPerMile = unitDefinitions.ftPerMile.value

function positive(name: string, v: number) {
  if (!(Number.isFinite(v) && v > 0)) throw new AppError('invalid_input', `${name}: expected a number above 0, found ${v}`)
}

/**
 * Load-area calibration: rate = load ÷ area covered, area = length × effective swath width.
 * US: load in gal or tons, lengths in ft → gal/ac or ton/ac (area acres = ft² ÷ 43,560;
 * Ohio State Bulletin 604; Utah State CNMP Step 7.1). Metric: load in L or t, lengths in m →
 * L/ha or t/ha. Use the effective (overlapped) swath. Throws AppError('invalid_input') for sizes ≤ 0.
 */
export function computeLoadAreaRate(input: { load: number; length: number; width: number; units: 'us' | 'metric' }): {
  rate: number
  area: number
} {
  positive('load', input.load)
  positive('length', input.length)
  positive('width', input.width)
  const area = (input.length * input.width) / (input.units === 'metric' ? m2PerHa : ft2PerAcre)
  return { rate: input.load / area, area }
}

/**
 * Sheet (tarp) calibration for solid spreaders: the manure caught on sheets of known area.
 * US: lb caught and sheet ft² → ton/ac = (lb ÷ 2000) ÷ (ft² ÷ 43,560), i.e. lb × 21.78 ÷ ft²
 * (UMass Extension); a 56 × 56 in sheet is 1/2000 acre so pounds caught equal tons per acre
 * (Iowa State Univ., 2001). Metric: kg and m² → t/ha. Several sheets are averaged.
 * Throws AppError('invalid_input') for no sheets, a weight < 0 or a sheet area ≤ 0.
 */
export function computeSheetRate(input: { caught: number[]; sheetArea: number; units: 'us' | 'metric' }): {
  rate: number
  perSheet: number[]
} {
  if (input.caught.length === 0) throw new AppError('invalid_input', 'caught: give the weight caught on at least one sheet')
  positive('sheet_area', input.sheetArea)
  const perSheet = input.caught.map((w, i) => {
    if (!(Number.isFinite(w) && w >= 0)) throw new AppError('invalid_input', `caught.${i}: expected a weight of 0 or more, found ${w}`)
    return input.units === 'metric' ? w / 1000 / (input.sheetArea / m2PerHa) : w / lbPerTon / (input.sheetArea / ft2PerAcre)
  })
  return { rate: perSheet.reduce((s, x) => s + x, 0) / perSheet.length, perSheet }
}

/**
 * The setting for a target rate: the area covered per minute at a speed and width, and the
 * discharge (per minute) that gives the rate, or the speed that gives it for a known discharge.
 * US: width ft, speed mph, discharge gal/min or ton/min; acres/min = width × mph × 5280 ÷ 60 ÷
 * 43,560 (= width × mph ÷ 495). Metric: width m, speed km/h, discharge L/min or t/min;
 * ha/min = width × km/h × 1000 ÷ 60 ÷ 10,000. Give exactly one of speed or discharge.
 * Throws AppError('invalid_input') otherwise.
 */
export function computeCalibrationSetting(input: {
  targetRate: number
  width: number
  speed?: number
  dischargePerMin?: number
  units: 'us' | 'metric'
}): { speed: number; dischargePerMin: number; areaPerHour: number } {
  positive('target_rate', input.targetRate)
  positive('width', input.width)
  const areaPerMinAtUnitSpeed =
    input.units === 'metric' ? (input.width * 1000) / 60 / m2PerHa : (input.width * ftPerMile) / 60 / ft2PerAcre
  if ((input.speed === undefined) === (input.dischargePerMin === undefined)) {
    throw new AppError('invalid_input', 'give either speed or discharge_per_min (the other is computed)')
  }
  let speed: number
  let discharge: number
  if (input.speed !== undefined) {
    positive('speed', input.speed)
    speed = input.speed
    discharge = input.targetRate * areaPerMinAtUnitSpeed * speed
  } else {
    positive('discharge_per_min', input.dischargePerMin!)
    discharge = input.dischargePerMin!
    speed = discharge / (input.targetRate * areaPerMinAtUnitSpeed)
  }
  return { speed, dischargePerMin: discharge, areaPerHour: areaPerMinAtUnitSpeed * speed * 60 }
}
