// The session page in Chromium: the over-rev verdict with the time above each threshold, exact
// equivalent hours for a session read from a trace, and the approximation marked for one entered by hand.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, LAPTOP, TABLET } from './browser'
import { db, signIn, USERS } from '../e2e/helpers'

let browser: Browser
let manualSessionId: number | null = null
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
  if (manualSessionId) {
    await db()('sessions').where('id', manualSessionId).delete()
    await db()('life_revision').where('id', 1).increment('revision', 1)
  }
})

describe('session page in Chromium', () => {
  it('shows the missed downshift as a teardown-band event with its time above each threshold, and exact equivalent hours', async () => {
    // KV8-1102's last race of the demo holds a missed downshift into the teardown band
    const row = await db()('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('e.serial', 'KV8-1102').whereRaw("JSON_SEARCH(s.over_revs, 'one', 'C', NULL, '$[*].bandId') IS NOT NULL").first('s.id')
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto(`/sessions/${row.id}`)
    await page.locator('[data-test=over-rev-table]').waitFor()
    const verdicts = await page.locator('[data-test=over-rev-row] td:first-child').allTextContents()
    expect(verdicts.map((v) => v.trim())).toContain('Teardown (+7.6 %)')
    expect(await page.locator('[data-test=over-rev-table]').textContent()).toMatch(/At or above 9900 rpm/)
    expect(await page.locator('[data-test=eq-exactness]').textContent()).toMatch(/exact to their definition within 0\.0\d\d %/)
    await screenshot(page, 'session-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'session-tablet')
    await page.setViewportSize(LAPTOP)
    await page.close()
  })

  it('marks a session entered by hand as approximate and shows each part\'s range', async () => {
    const engineer = await signIn(USERS.supplierEngineer)
    const engine = await db()('engines').where('serial', 'KV8-1001').first()
    const histogram = Array(21).fill(0)
    histogram[17] = 1800 // 8,500-9,000 rpm
    const res = await engineer.post('/api/sessions', { engineId: engine.id, eventId: null, kind: 'bench', startedAt: new Date(Date.now() - 3600_000).toISOString(), runningSeconds: 1800, distanceKm: 0, histogram, overRevs: [] })
    expect(res.status).toBe(201)
    manualSessionId = res.body.id
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto(`/sessions/${manualSessionId}`)
    await page.locator('[data-test=cost-table]').waitFor()
    expect(await page.locator('[data-test=eq-exactness]').textContent()).toMatch(/Approximate/)
    expect(await page.locator('[data-test=cost-table]').textContent()).toMatch(/≈ \d/)
    await screenshot(page, 'session-manual-laptop')
    await page.close()
  })
})
