import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { makeEngineType } from '../../db/fixtures'
import { db, signIn, USERS } from '../e2e/helpers'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

describe('engine type sheet in Chromium: reciprocating inertia force', () => {
  it('shows the force at the rev limit and at each over-rev threshold, in N and kN, as design aids', async () => {
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto('/engine-types')
    const v8 = page.locator('[data-test=inertia-KV8-45]')
    await v8.locator('[data-test=inertia-rev-limit]').waitFor()
    // Demo V8 (0.52 kg, stroke 81 mm, conrod 140 mm, 9,200 rpm), hand-computed from Heywood ch. 2 at TDC:
    // 0.52 x 0.0405 x (2 pi 9,200 / 60)^2 x (1 + 40.5/140) = 25,202.31 N; at BDC x (1 - 40.5/140) = 13,892.69 N.
    const limit = (await v8.locator('[data-test=inertia-rev-limit]').textContent()) ?? ''
    expect(limit).toContain('9,200')
    expect(limit).toContain('25,202 N')
    expect(limit).toContain('25.20 kN')
    expect(limit).toContain('13,893 N')
    // Band C threshold, 9,900 rpm: 0.52 x 0.0405 x (2 pi 9,900 / 60)^2 x 1.289286 = 29,183.35 N
    expect(await v8.locator('[data-test=inertia-band-C]').textContent()).toContain('29,183 N')
    expect(await v8.locator('[data-test=reciprocating-mass]').textContent()).toContain('0.520 kg')
    expect(await v8.textContent()).toContain('These are design aids')
    // A team reads the sheet; only the supplier edits the mass.
    expect(await v8.locator('[data-test=edit-mass]').count()).toBe(0)
    await screenshot(page, 'engine-type-loads-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'engine-type-loads-tablet')
    await page.close()
  })

  it('lets the supplier engineer edit the mass: zero is refused naming the field, a good value moves the forces', async () => {
    const supplier = await signIn(USERS.supplierEngineer)
    const rod = await db()('component_types').where('code', 'KV8-ROD').first('id')
    const code = `TST-SHEET-${Date.now().toString(36).toUpperCase()}`
    const created = await supplier.post('/api/engine-types', {
      ...makeEngineType({ code, name: 'Sheet test four', cylinders: 4, layout: 'I4', strokeMm: 90, conrodMm: 145, revLimitRpm: 7500, reciprocatingMassKg: null }),
      positions: [{ position: 'rod-1', label: 'Conrod 1', componentTypeId: rod.id }],
    })
    expect(created.status).toBe(201)

    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto('/engine-types')
    const sheet = page.locator(`[data-test=inertia-${code}]`)
    await sheet.waitFor()
    expect(await sheet.textContent()).toContain('No reciprocating mass set: enter it to see the inertia forces.')

    await sheet.locator('[data-test=edit-mass]').click()
    await sheet.locator(`#et-mass-${created.body.id}`).fill('0')
    await sheet.locator('[data-test=mass-form] button[type=submit]').click()
    await expect.poll(() => sheet.locator('[role=alert]').textContent()).toBe('Reciprocating mass: must be above zero')

    await sheet.locator(`#et-mass-${created.body.id}`).fill('0.5')
    await sheet.locator('[data-test=mass-form] button[type=submit]').click()
    // Worked case [derived] (Heywood ch. 2): 0.5 kg, 90 / 145 mm, 7,500 rpm gives 18,186 N at TDC.
    await expect.poll(() => sheet.locator('[data-test=inertia-rev-limit]').textContent()).toContain('18,186 N')
    expect(await sheet.locator('[data-test=inertia-rev-limit]').textContent()).toContain('18.19 kN')
    expect((await db()('engine_types').where('code', code).first()).reciprocating_mass_kg).toBe('0.5000')
    await page.close()
  })
})
