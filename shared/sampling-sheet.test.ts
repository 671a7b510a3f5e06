import { describe, expect, it } from 'vitest'
import { afterSamplingChecklist, liquidChecklist, planSamples, renderSamplingSheet, safetyCautions, type SamplingSheetInput } from './sampling-sheet.ts'

const input: SamplingSheetInput = {
  farm: { code: 'QBF', name: 'Quillback <Finishing> & Sons', operatorName: 'Perrin Ashdown' },
  visitDate: '2026-10-12',
  storages: [
    { code: 'P1', name: 'North barn pit', kind: 'deep_pit', species: 'swine', form: 'liquid', accessPoints: 3, size: '200 × 41 × 8 ft' },
    { code: 'SLAB', kind: 'stack', species: 'beef', form: 'solid', accessPoints: null },
  ],
}

describe('sampling sheet', () => {
  it('gives one sample id per storage and access point, dated by the visit', () => {
    expect(planSamples(input).map((s) => s.sampleCode)).toEqual([
      'QBF-P1-20261012-A',
      'QBF-P1-20261012-B',
      'QBF-P1-20261012-C',
      'QBF-SLAB-20261012-A', // a storage without access points still gets one sample
    ])
  })

  it('renders a self-contained printable page: no scripts, no outside resources, text escaped', () => {
    const html = renderSamplingSheet(input)
    expect(html.startsWith('<!doctype html>')).toBe(true)
    expect(html).not.toMatch(/<script|<link|src=|https?:/i)
    expect(html).toContain('Quillback &lt;Finishing&gt; &amp; Sons')
    for (const s of planSamples(input)) expect(html).toContain(`<td class="id">${s.sampleCode}</td>`)
    expect(html).toMatch(/@page/)
  })

  it('puts the manure-gas cautions before the samples', () => {
    const html = renderSamplingSheet(input)
    expect(html.indexOf('Danger: manure gases')).toBeLessThan(html.indexOf('Samples ('))
    expect(html).toContain('Never enter a manure storage')
    expect(html).toContain('500–700 ppm can cause collapse within minutes')
  })

  it('lists the published and common-practice checklist items, each with its source', () => {
    const html = renderSamplingSheet(input)
    // Washington State Dept. of Agriculture: 10–20 cores with a long sampler; 15–25 subsamples (liquid and solid)
    expect(html).toContain('10–20 cores in all')
    expect(html).toContain('15–25 subsamples')
    // Alberta NMP Guide p. 153: airtight bottles, double-bagged
    expect(html).toContain('double-bag every bottle')
    expect(html).toContain('Leave out the bottom sludge and the sump areas that are never pumped')
    expect(html).toContain('about three-quarters full')
    expect(html).toContain('manure-analysis proficiency program')
    for (const item of [...safetyCautions, ...liquidChecklist, ...afterSamplingChecklist]) expect(item.source.length).toBeGreaterThan(0)
  })

  it('shows only the checklist sections for the forms the farm has', () => {
    const liquidOnly = renderSamplingSheet({ ...input, storages: [input.storages[0]!] })
    expect(liquidOnly).toContain('Liquid storages')
    expect(liquidOnly).not.toContain('Solid manure</h3>')
  })
})
