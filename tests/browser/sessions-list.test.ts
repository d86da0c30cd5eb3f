// Finding a session and correcting it in Chromium: from the engine page's sessions table to the
// session page, voiding and restoring it there, and the sessions list with voided sessions hidden
// until asked for. Runs on an engine of its own.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, LAPTOP, TABLET } from './browser'
import { signIn, USERS } from '../e2e/helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from '../e2e/fresh-engine'

const HOUR = 3_600_000
let browser: Browser
let engine: FreshEngine
const ids: number[] = []

beforeAll(async () => {
  browser = await launch()
  engine = await freshEngine('KV8-BR')
  const race = await signIn(USERS.raceA)
  for (const [hoursAgo, band] of [[30, 16], [6, 17]] as const) {
    const histogram = Array<number>(21).fill(0) // KV8-45: 21 bands of 500 rpm
    histogram[band] = 2400
    const res = await race.post('/api/sessions', { engineId: engine.id, eventId: null, kind: 'test', startedAt: new Date(Date.now() - hoursAgo * HOUR).toISOString(), runningSeconds: 2400, distanceKm: 110, histogram })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    ids.push(res.body.id)
  }
  // The older one was filed in error
  expect((await race.post(`/api/sessions/${ids[0]}/void`, { reason: 'Bench run logged as a track test' })).status).toBe(200)
})
afterAll(async () => {
  await browser?.close()
  await removeFreshEngines([engine])
})

describe('sessions in Chromium', () => {
  it('reaches a session page from the engine page, and voids and restores it there', async () => {
    const page = await signedInPage(browser, USERS.raceA)
    await page.goto(`/engines/${engine.id}`, { waitUntil: 'networkidle' })
    const links = page.locator('[data-test=sessions-table] [data-test=session-link]')
    expect(await links.count()).toBe(2)
    // Newest first: the live session, then the voided one, marked as such
    expect(await page.locator('[data-test=sessions-table] tr[data-voided=true] [data-test=voided-tag]').count()).toBe(1)
    await page.locator('[data-test=sessions-table]').scrollIntoViewIfNeeded()
    await screenshot(page, 'sessions-engine-page-laptop')
    await links.first().click()
    await page.waitForURL(`**/sessions/${ids[1]}`)
    await page.locator('[data-test=cost-table]').waitFor()
    expect(await page.locator('h1').textContent()).toContain(engine.serial)
    await page.waitForLoadState('networkidle')
    await screenshot(page, 'sessions-page-laptop')

    await page.click('[data-test=open-void]')
    await page.fill('#void-reason', 'Wrong engine chosen at import')
    await page.click('[data-test=void-form] button[type=submit]')
    const banner = page.locator('[data-test=void-banner]')
    await banner.waitFor()
    expect(await banner.textContent()).toMatch(/Voided .* UTC by .*“Wrong engine chosen at import”/)
    await screenshot(page, 'sessions-page-voided-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'sessions-page-voided-tablet')
    await page.setViewportSize(LAPTOP)

    await page.click('[data-test=restore-session]')
    await banner.waitFor({ state: 'detached' })
    expect(await page.locator('[data-test=open-void]').count()).toBe(1)
    await page.close()
  })

  it('lists sessions from the nav, hides voided ones until the filter shows them', async () => {
    const page = await signedInPage(browser, USERS.raceA)
    await page.waitForLoadState('networkidle')
    await page.click('nav >> text=Sessions')
    await page.waitForURL('**/sessions')
    await page.locator('[data-test=session-list]').waitFor()
    await page.waitForLoadState('networkidle')
    await page.selectOption('#f-engine', String(engine.id))
    await page.waitForURL(`**/sessions?engineId=${engine.id}`)
    const rows = page.locator('[data-test=session-row]')
    await expect.poll(() => rows.count()).toBe(1)
    expect(await page.locator('[data-test=session-list-count]').textContent()).toMatch(/1 session\b/)

    await page.selectOption('[data-test=filter-voided]', 'show')
    await expect.poll(() => rows.count()).toBe(2)
    expect(await page.locator('[data-test=session-row][data-voided=true]').count()).toBe(1)
    expect(await page.locator('[data-test=session-row][data-voided=true]').textContent()).toContain('Void')
    await screenshot(page, 'sessions-list-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'sessions-list-tablet')

    // The list links to the session page
    await page.locator('[data-test=session-row]:not([data-voided]) a').first().click()
    await page.waitForURL(`**/sessions/${ids[1]}`)
    await page.close()
  })
})
