// Correcting an oil sample through the form, in Chromium, on KV8-1203 (Tidewater's spare, which
// has no demo oil history): the form opens filled in, and the saved figures show in the table.
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { LAPTOP, launch, screenshot, signedInPage, TABLET } from './browser'
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
const hundredNumber = `T-OIL100-${Date.now().toString(36).toUpperCase()}`
afterAll(async () => {
  await db()('oil_samples').whereIn('sample_id', [labNumber, hundredNumber]).delete()
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

describe('lab file with particle counts per 100 mL, in Chromium', () => {
  it('states the per mL default, imports with the basis chosen, and the engine page shows the ISO 4406 code and the change from new oil', async () => {
    const engine = await db()('engines').where('serial', 'KV8-1203').first()
    const dir = mkdtempSync(join(tmpdir(), 'cl-oil-'))
    const file = join(dir, 'hundred.csv')
    const day = new Date(Date.now() - 2 * 3_600_000).toISOString().slice(0, 10)
    writeFileSync(file, ['Unit ID,Sample No,Date Sampled,Visc 40C,Visc 100C,HTHS 150C,>4 um,>6 um,>14 um', `KV8-1203,${hundredNumber},${day},89.7,14.2,3.9,300000,50000,700`].join('\n'))

    const page = await signedInPage(browser, USERS.raceB, LAPTOP)
    await page.goto('/oil/import')
    await page.fill('#i-lab', `Browser lab ${hundredNumber}`)
    await page.setInputFiles('#i-file', file)
    const basis = page.locator('[data-test=particle-basis]')
    await expect.poll(() => basis.textContent()).toContain('per mL (default)')
    expect(await basis.textContent()).toContain('ISO 4406 codes are read per mL')
    expect(await page.isChecked('input[name=particle-basis][value=per_ml]')).toBe(true)
    await page.check('input[name=particle-basis][value=per_100ml]')
    await screenshot(page, 'oil-import-basis-laptop')
    await page.click('button:has-text("Import the file")')
    await expect.poll(() => page.locator('[role=status]').textContent()).toContain(hundredNumber)

    await page.goto(`/oil/${engine.id}`)
    const row = page.locator('[data-test=oil-samples] tbody tr', { hasText: hundredNumber })
    // 300,000 / 50,000 / 700 per 100 mL is 19/16/10 (ISO 4406:1999 worked example, as reproduced).
    await expect.poll(() => row.textContent()).toContain('19/16/10')
    // Against the demo reference of KV8-45 (92.0 / 14.6): 89.7 is -2.5 %, 14.2 is -2.7 % (hand-worked).
    expect(await row.locator('[data-test=kv40-change]').textContent()).toBe('−2.5 %')
    expect(await row.locator('[data-test=kv100-change]').textContent()).toBe('−2.7 %')
    expect(await row.locator('[data-test=hths]').textContent()).toContain('3.9')
    expect(await page.locator('[data-test=new-oil-reference]').textContent()).toContain('SAE 5W-40, KV40 92 mm²/s, KV100 14.6 mm²/s, TBN 8.2 mg KOH/g')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'oil-engine-tablet')
    await page.close()
  })
})

describe('new-oil reference in the oil limits page, in Chromium', () => {
  it('shows the demo reference of KV8-45 to the supplier engineer, saves an edit and audits it', async () => {
    const type = await db()('engine_types').where('code', 'KV8-45').first()
    const engineer = await signIn(USERS.supplierEngineer)
    const original = (await engineer.get(`/api/oil/limits/${type.id}`)).body.limits
    const page = await signedInPage(browser, USERS.supplierEngineer, LAPTOP)
    try {
      await page.goto('/oil/limits')
      await page.selectOption('#l-type', String(type.id))
      await expect.poll(() => page.inputValue('#l-nkv40')).toBe('92')
      expect(await page.inputValue('#l-ngrade')).toBe('5W-40')
      expect(await page.inputValue('#l-nkv100')).toBe('14.6')
      expect(await page.inputValue('#l-ntbn')).toBe('8.2')
      expect(await page.inputValue('#l-kv40')).toBe('25')
      await page.fill('#l-nkv40', '95.5')
      await screenshot(page, 'oil-limits-reference-laptop')
      await page.click('button[type=submit]')
      await expect.poll(() => page.locator('[role=status]').textContent()).toContain('Limits saved')
      const saved = (await engineer.get(`/api/oil/limits/${type.id}`)).body.limits
      expect(saved.newOil).toEqual({ grade: '5W-40', kv40: 95.5, kv100: 14.6, tbn: 8.2 })
      const entry = await db()('audit_log').where({ entity: 'oil_limits', entity_id: String(type.id) }).orderBy('id', 'desc').first()
      const after = typeof entry.after_value === 'string' ? JSON.parse(entry.after_value) : entry.after_value
      expect(after.newOil.kv40).toBe(95.5)
    } finally {
      await page.close()
      expect((await engineer.put(`/api/oil/limits/${type.id}`, original)).status).toBe(200)
    }
  })

  it('shows the reference to a team read-only', async () => {
    const page = await signedInPage(browser, USERS.raceB, TABLET)
    await page.goto('/oil/limits')
    await page.locator('[data-test=new-oil]').waitFor()
    expect(await page.isDisabled('#l-nkv40')).toBe(true)
    expect(await page.locator('button[type=submit]').count()).toBe(0)
    await page.close()
  })
})
