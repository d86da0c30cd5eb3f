// Printing and charts in Chromium: the teardown report's Print button opens the print dialog
// under the content security policy, and Chromium's own print to PDF carries the report; the part
// page's print and export actions; the session page's five charts with the over-revs marked.
// Demo records only: KT4-2201's signed-off teardown and a conrod of it, KV8-1102's missed downshift.
import { mkdirSync, writeFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { launch, screenshot, signedInPage, LAPTOP, TABLET } from './browser'
import { db, USERS } from '../e2e/helpers'
import { pdfText } from './pdf-text'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

/** window.print stubbed before any script of the page runs: the test counts the calls instead of a dialog opening. */
async function withPrintStub(page: Page) {
  await page.addInitScript(() => {
    ;(window as any).__printCalls = 0
    window.print = () => {
      ;(window as any).__printCalls++
    }
  })
}

function cspErrors(page: Page): string[] {
  const seen: string[] = []
  page.on('console', (m) => {
    if (m.type() === 'error' && /Content Security Policy/i.test(m.text())) seen.push(m.text())
  })
  return seen
}

describe('teardown report', () => {
  it('Print opens the print dialog with no policy violation, and the PDF carries the engine and its readings', async () => {
    // the demo's signed-off teardown with readings (other files open teardowns of their own on this engine)
    const td = await db()('teardowns as t').join('engines as e', 'e.id', 't.engine_id').where('e.serial', 'KT4-2201').where('t.state', 'signed off')
      .whereExists(db()('teardown_measurements as m').whereRaw('m.teardown_id = t.id')).orderBy('t.id').first('t.id')
    const reading = await db()('teardown_measurements').where('teardown_id', td.id).orderBy('id').first('value', 'unit')
    const page = await signedInPage(browser, USERS.mechanicA)
    await withPrintStub(page)
    const violations = cspErrors(page)
    const res = await page.goto(`/teardowns/${td.id}/report`)
    const scriptSrc = (res!.headers()['content-security-policy'] ?? '').split(';').find((d) => d.trim().startsWith('script-src'))
    expect(scriptSrc).toBeTruthy()
    expect(scriptSrc).not.toMatch(/unsafe-inline|unsafe-eval/)
    await page.locator('[data-test=report]').waitFor()
    await page.locator('[data-test=print]').click()
    await expect.poll(() => page.evaluate(() => (window as any).__printCalls)).toBe(1)
    expect(violations).toEqual([])
    expect(await page.locator('[data-test=export-csv]').getAttribute('href')).toBe(`/api/teardowns/${td.id}/measurements.csv`)

    await screenshot(page, 'teardown-report-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'teardown-report-tablet')
    await page.setViewportSize(LAPTOP)

    const pdf = await page.pdf({ format: 'A4', preferCSSPageSize: true, printBackground: true })
    mkdirSync('screenshots', { recursive: true })
    writeFileSync('screenshots/teardown-report.pdf', pdf)
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-')
    const text = pdfText(pdf)
    expect(text).toContain('KT4-2201')
    // as the report prints a reading: the stored value and its unit
    expect(text).toContain(`${Number(reading.value)} ${reading.unit}`)
    expect(text.toLowerCase()).toContain('measurements')
    // the screen's controls and the app's header are not printed
    expect(text).not.toContain('Export measurements')
    expect(text).not.toContain('Sign out')
    // how the printout looks, as an image to check by eye
    await page.emulateMedia({ media: 'print' })
    await page.setViewportSize({ width: 794, height: 1123 }) // A4 at 96 px per inch
    await screenshot(page, 'teardown-report-print')
    await page.close()
  })

  it('the teardown page follows the app: back link, UTC dates, the safety notice once', async () => {
    const td = await db()('teardowns as t').join('engines as e', 'e.id', 't.engine_id').where('e.serial', 'KT4-2201').orderBy('t.opened_at', 'desc').first('t.id', 't.opened_at')
    const page = await signedInPage(browser, USERS.mechanicA)
    await page.goto(`/teardowns/${td.id}`)
    await page.locator('[data-test=teardown]').waitFor()
    const body = await page.evaluate(() => document.body.innerText)
    expect(body).toContain('← Teardowns')
    const opened = new Date(td.opened_at)
    const day = opened.toLocaleDateString('en-GB', { day: '2-digit', month: 'short', year: 'numeric', timeZone: 'UTC' })
    expect(body).toContain(`${day} ${opened.toISOString().slice(11, 16)} UTC`)
    expect(body.match(/licensed practice/g)?.length).toBe(1)
    await screenshot(page, 'teardown-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'teardown-tablet')
    await page.close()
  })
})

describe('part page', () => {
  it('prints through the print dialog and links its history export', async () => {
    const engine = await db()('engines').where('serial', 'KT4-2201').first('id')
    const inst = await db()('installations').where({ engine_id: engine.id, position: 'rod-3' }).whereNull('to_at').first('component_id')
    const page = await signedInPage(browser, USERS.managerA)
    await withPrintStub(page)
    const violations = cspErrors(page)
    await page.goto(`/parts/${inst.component_id}`)
    await page.locator('[data-test=print]').click()
    await expect.poll(() => page.evaluate(() => (window as any).__printCalls)).toBe(1)
    expect(violations).toEqual([])
    expect(await page.locator('[data-test=export-csv]').getAttribute('href')).toBe(`/api/parts/${inst.component_id}/history.csv`)
    // innerText: what is shown, not the page's data payload
    expect((await page.evaluate(() => document.body.innerText)).match(/licensed practice/g)?.length).toBe(1)
    await screenshot(page, 'part-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'part-tablet')
    await page.emulateMedia({ media: 'print' })
    await page.setViewportSize({ width: 794, height: 1123 })
    await screenshot(page, 'part-print')
    await page.close()
  })
})

describe('session page charts', () => {
  it('draws engine speed, oil temperature, oil pressure, water temperature and speed, with the over-revs marked', async () => {
    const row = await db()('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('e.serial', 'KV8-1102').whereRaw("JSON_SEARCH(s.over_revs, 'one', 'C', NULL, '$[*].bandId') IS NOT NULL").first('s.id', 's.over_revs')
    const overRevs = typeof row.over_revs === 'string' ? JSON.parse(row.over_revs) : row.over_revs
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto(`/sessions/${row.id}`)
    const channels = ['rpm', 'oilTempC', 'oilPressureBar', 'waterTempC', 'speedKmh']
    for (const c of channels) await page.locator(`[data-test=trace-chart-${c}] svg.apexcharts-svg`).waitFor()
    expect(await page.locator('[data-test^=trace-chart-] svg.apexcharts-svg').count()).toBe(5)
    const titles = await page.locator('[data-test^=trace-chart-] h2').allTextContents()
    expect(titles.map((t) => t.replace(/\s+/g, ' ').trim())).toEqual([
      'Engine speed over the session (rpm)',
      'Oil temperature over the session (°C)',
      'Oil pressure over the session (bar)',
      'Water temperature over the session (°C)',
      'Speed over the session (km/h)',
    ])
    expect(await page.locator('[data-test=trace-chart-rpm] [data-test=trace-chart-markers]').textContent()).toContain(`${overRevs.length} over-rev event${overRevs.length === 1 ? '' : 's'} marked`)
    const labels = await page.locator('[data-test=trace-chart-rpm] .apexcharts-xaxis-annotations text').allTextContents()
    const peak = overRevs.find((o: any) => o.bandId === 'C').peakRpm
    expect(labels).toContain(`▲ Teardown (+7.6 %) ${peak} rpm`)
    await screenshot(page, 'session-charts-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'session-charts-tablet')
    await page.close()
  })
})
