import { describe, expect, it } from 'vitest'
import { computeCalibrationSetting, computeLoadAreaRate, computeSheetRate } from './calibration.ts'
import { isAppError } from './errors.ts'

describe('computeSheetRate', () => {
  it('reads pounds on a 56 × 56 in sheet as tons per acre (Iowa State Univ., Odor and Nutrient Mgmt, Fall 2001: the sheet is 1/2000 acre)', () => {
    const sheetFt2 = (56 * 56) / 144
    const r = computeSheetRate({ caught: [9.5], sheetArea: sheetFt2, units: 'us' })
    expect(r.rate).toBeCloseTo(9.5, 2)
  })
  it('matches UMass Extension: tons/acre = lb × 21.8 ÷ sheet ft², averaging several sheets', () => {
    const r = computeSheetRate({ caught: [30, 36, 33], sheetArea: 100, units: 'us' })
    expect(r.perSheet[0]).toBeCloseTo((30 * 21.8) / 100, 1)
    expect(r.rate).toBeCloseTo((33 * 21.8) / 100, 1)
  })
  it('matches the Jefferson Conservation District guide: a 12 × 12 ft tarp is 0.003306 acre', () => {
    const r = computeSheetRate({ caught: [20], sheetArea: 144, units: 'us' })
    expect(r.rate).toBeCloseTo(20 / 2000 / 0.003306, 1)
  })
  it('gives t/ha from kg on a sheet of known m² in metric', () => {
    expect(computeSheetRate({ caught: [2], sheetArea: 1, units: 'metric' }).rate).toBeCloseTo(20, 9)
  })
  it('refuses a negative weight naming the sheet', () => {
    expect(() => computeSheetRate({ caught: [3, -1], sheetArea: 10, units: 'us' })).toThrow('caught.1')
  })
})

describe('computeLoadAreaRate', () => {
  it('divides the load by the area covered, acres = length × width ÷ 43,560 (Utah State CNMP Step 7.1)', () => {
    // 3,000 gal over 1,000 ft × 30 ft = 0.6887 ac → 4,356 gal/ac
    const r = computeLoadAreaRate({ load: 3000, length: 1000, width: 30, units: 'us' })
    expect(r.area).toBeCloseTo(30000 / 43560, 9)
    expect(r.rate).toBeCloseTo(4356, 6)
  })
  it('gives L/ha in metric', () => {
    expect(computeLoadAreaRate({ load: 20000, length: 500, width: 10, units: 'metric' }).rate).toBeCloseTo(40000, 9)
  })
  it('refuses a zero width', () => {
    try {
      computeLoadAreaRate({ load: 3000, length: 100, width: 0, units: 'us' })
      expect.unreachable()
    } catch (error) {
      expect(isAppError(error) && error.message).toContain('width')
    }
  })
})

describe('computeCalibrationSetting', () => {
  it('gives the discharge for a target rate at a speed: acres/min = width ft × mph ÷ 495', () => {
    const r = computeCalibrationSetting({ targetRate: 5000, width: 40, speed: 5, units: 'us' })
    expect(r.dischargePerMin).toBeCloseTo((5000 * 40 * 5) / 495, 6)
    expect(r.areaPerHour).toBeCloseTo((40 * 5 * 60) / 495, 6)
  })
  it('gives the speed for a known discharge, the inverse of the above', () => {
    const r = computeCalibrationSetting({ targetRate: 5000, width: 40, dischargePerMin: 2020.2, units: 'us' })
    expect(r.speed).toBeCloseTo(5, 2)
  })
  it('refuses both speed and discharge together', () => {
    expect(() => computeCalibrationSetting({ targetRate: 1, width: 1, speed: 1, dischargePerMin: 1, units: 'us' })).toThrow('either speed or discharge_per_min')
  })
})
