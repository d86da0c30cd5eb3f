// The evidence page in Chromium on the demo valve springs: the Weibull plot with both lines and the
// current limit, the two estimates, the no-fit state of a mode with two failures, and the CSV.
import { readFileSync } from 'node:fs'
import { parse as parseCsv } from 'csv-parse/sync'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { LAPTOP, launch, screenshot, signedInPage, TABLET } from './browser'
import { db, USERS } from '../e2e/helpers'

let browser: Browser
let vspId: number
beforeAll(async () => {
  browser = await launch()
  vspId = (await db()('component_types').where('code', 'KV8-VSP').first('id')).id
})
afterAll(async () => {
  await browser?.close()
})

describe('field evidence page', () => {
  it.each([['laptop', LAPTOP], ['tablet', TABLET]] as const)('draws the fatigue-crack fit on Weibull axes with the limit across (%s)', async (name, viewport) => {
    const page = await signedInPage(browser, USERS.supplierEngineer, viewport)
    await page.goto(`/evidence?type=${vspId}&mode=fatigue%20crack`)
    await page.locator('[data-test=weibull-plot] .apexcharts-svg').waitFor()
    expect(await page.locator('[data-test=fit-shape] td').first().textContent()).toContain('Shape')
    expect(await page.locator('[data-test=fit-table]').textContent()).toContain('Fisher matrix')
    // the current limit's dashed line and its label
    expect(await page.locator('[data-test=weibull-plot]').textContent()).toContain('current limit 66.5 h')
    // seven failures plotted, and the legend names both lines
    const legend = await page.locator('[data-test=weibull-plot] .apexcharts-legend').textContent()
    expect(legend).toContain('Maximum likelihood')
    expect(legend).toContain('Median-rank regression')
    expect(await page.locator('[data-test=evidence-units] tbody tr').filter({ hasText: 'failure' }).count()).toBe(7)
    expect(await page.locator('[data-test=fit-meaning]').textContent()).toContain("supplier's engineering decision")
    await screenshot(page, `evidence-${name}`)
    await page.close()
  })

  it('shows the data and says why there is no fit for a mode with two failures', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer, LAPTOP)
    await page.goto(`/evidence?type=${vspId}`)
    await page.click('[data-test="mode-loss of load"]')
    await page.locator('[data-test=no-fit]').waitFor()
    expect(await page.locator('[data-test=no-fit]').textContent()).toContain('2 failures of')
    await page.locator('[data-test=weibull-plot] .apexcharts-svg').waitFor()
    expect(await page.locator('[data-test=weibull-plot] .apexcharts-legend').textContent()).not.toContain('Maximum likelihood')
    await screenshot(page, 'evidence-no-fit-laptop')
    await page.close()
  })

  it('exports the data set as CSV, one row per part with its outcome', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer, LAPTOP)
    await page.goto(`/evidence?type=${vspId}&mode=fatigue%20crack`)
    await page.locator('[data-test=evidence-units]').waitFor()
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-test=evidence-csv]')])
    const rows = parseCsv(readFileSync((await download.path())!, 'utf8'), { columns: true, skip_empty_lines: true }) as Record<string, string>[]
    await page.close()
    expect(rows.filter((r) => r.outcome === 'failure')).toHaveLength(7)
    const first = rows.find((r) => r.serial === 'KV8VSP-3101')!
    expect(first).toMatchObject({ part_type: 'KV8-VSP', failure_mode_analysed: 'fatigue crack', outcome: 'failure', life_hours: '38', unit: 'h', state: 'removed' })
    expect(rows.some((r) => r.state === 'running' && r.outcome === 'suspension')).toBe(true)
  })
})
