// Correcting an oil sample through the form, in Chromium, on KV8-1203 (Tidewater's spare, which
// has no demo oil history): the form opens filled in, and the saved figures show in the table.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { db, signIn, USERS } from '../e2e/helpers'

let browser: Browser
let sampleId: number
const labNumber = `T-OILFIX-${Date.now().toString(36).toUpperCase()}`

beforeAll(async () => {
  browser = await launch()
  const engine = await db()('engines').where('serial', 'KV8-1203').first()
  const raceB = await signIn(USERS.raceB)
  const made = await raceB.post('/api/oil/samples', { engineId: engine.id, lab: 'Bench lab', sampleId: labNumber, sampledAt: new Date(Date.now() - 3_600_000).toISOString(), engineHours: 2, elements: { Fe: 7, Cu: 3 }, kv40: 90, kv100: 14 })
  expect(made.status, JSON.stringify(made.body)).toBe(201)
  sampleId = made.body.id
})
afterAll(async () => {
  await db()('oil_samples').where('sample_id', labNumber).delete()
  await browser?.close()
})

describe('oil sample correction in Chromium', () => {
  it('opens the recorded figures, saves a corrected one and shows it on the engine\'s oil page', async () => {
    const page = await signedInPage(browser, USERS.raceB, TABLET)
    await page.goto(`/oil/new?edit=${sampleId}`)
    await expect.poll(() => page.inputValue('#o-id')).toBe(labNumber)
    expect(await page.inputValue('#o-el-Fe')).toBe('7')
    expect(await page.isDisabled('#o-engine')).toBe(true)
    await page.fill('#o-el-Fe', '70')
    await screenshot(page, 'oil-correct-tablet')
    await page.click('button[type=submit]')
    await page.waitForURL(/\/oil\/\d+$/)
    const row = page.locator('[data-test=oil-samples] tbody tr', { hasText: labNumber })
    await expect.poll(() => row.textContent()).toContain('70')
    const stored = await db()('oil_samples').where('sample_id', labNumber).first()
    expect(typeof stored.elements === 'string' ? JSON.parse(stored.elements) : stored.elements).toEqual({ Fe: 70, Cu: 3 })
    await page.close()
  })
})
