import { mkdirSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { db, signIn, USERS } from '../e2e/helpers'

/** The dialog as the user sees it: the viewport, not the page behind it. */
async function viewShot(page: Page, name: string) {
  mkdirSync('screenshots', { recursive: true })
  await page.screenshot({ path: `screenshots/${name}.png` })
}

// The touring valve-spring type and the touring engine type's reference speed; both restored at the end.
let browser: Browser
let vsp: any
let kt4: any
beforeAll(async () => {
  browser = await launch()
  vsp = await db()('component_types').where('code', 'KT4-VSP').first()
  kt4 = await db()('engine_types').where('code', 'KT4-20').first()
})
afterAll(async () => {
  await browser?.close()
  const supplier = await signIn(USERS.supplierEngineer)
  await supplier.patch(`/api/component-types/${vsp.id}`, { warningLevel: Number(vsp.warning_level) })
  await supplier.patch(`/api/engine-types/${kt4.id}`, { referenceRpm: kt4.reference_rpm })
})

describe('the limit preview dialog in Chromium', () => {
  it('shows a warning level change on the fleet before saving, and saves it as previewed', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto('/engine-types')
    const row = page.locator('[data-test=component-types] tr', { hasText: 'KT4-VSP' })
    await row.getByRole('button', { name: 'Edit' }).click()
    await page.fill(`#ct-w-${vsp.id}`, '5')
    await page.locator('[data-test=limits-preview]').click()

    const dialog = page.getByRole('dialog')
    await dialog.waitFor()
    expect(await dialog.locator('h2').textContent()).toContain('KT4-VSP')
    const fields = (await dialog.locator('[data-test=preview-fields] tbody tr').allTextContents()).map((t) => t.replace(/\s+/g, ' ').trim())
    expect(fields).toEqual([`Warning level${(Number(vsp.warning_level) * 100).toFixed(1)} %5.0 %`])
    // the count on the tile is the number of rows listed below it
    const changes = await dialog.locator('[data-test=preview-status-changes] tbody tr').count()
    expect(changes).toBeGreaterThan(0)
    expect(await dialog.locator('[data-test=tile-status] .num').textContent()).toBe(String(changes))
    expect(await dialog.locator('[data-test=preview-status-changes] tbody tr').first().textContent()).toContain('Plan rebuild')
    expect(await dialog.textContent()).toContain('never a substitute')
    // nothing saved yet
    expect(Number((await db()('component_types').where('id', vsp.id).first()).warning_level)).toBe(Number(vsp.warning_level))
    await screenshot(page, 'limit-preview-page-laptop')
    await viewShot(page, 'limit-preview-dialog-laptop')
    await page.setViewportSize(TABLET)
    await viewShot(page, 'limit-preview-dialog-tablet')
    await dialog.locator('[data-test=preview-status-changes]').scrollIntoViewIfNeeded()
    await viewShot(page, 'limit-preview-dialog-tablet-lists')

    await dialog.locator('[data-test=preview-save]').click()
    await dialog.waitFor({ state: 'detached' })
    await expect.poll(async () => Number((await db()('component_types').where('id', vsp.id).first()).warning_level)).toBe(0.05)
    expect(await row.textContent()).toContain('5 %')
    await page.close()
  })

  it('tells the user when the data moved before saving, and shows the preview taken again', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto('/engine-types')
    const block = page.locator('[data-test=life-figures-KT4-20]')
    await block.locator('[data-test=edit-life-figures]').click()
    await page.fill(`#et-ref-${kt4.id}`, String(kt4.reference_rpm - 400))
    await block.locator('[data-test=life-figures-preview]').click()
    const dialog = page.getByRole('dialog')
    await dialog.waitFor()
    expect(await dialog.locator('[data-test=preview-fields]').textContent()).toContain(`${(kt4.reference_rpm - 400).toLocaleString('en-GB')} rpm`)

    // someone else saves a change that moves life meanwhile
    const other = await signIn(USERS.supplierEngineer)
    expect((await other.patch(`/api/component-types/${vsp.id}`, { warningLevel: 0.06 })).status).toBe(200)

    await dialog.locator('[data-test=preview-save]').click()
    const notice = dialog.locator('[data-test=preview-refreshed]')
    await notice.waitFor()
    expect(await notice.textContent()).toMatch(/changed since this preview.*save again\. The preview below is on the data as it is now\./)
    expect((await db()('engine_types').where('id', kt4.id).first()).reference_rpm).toBe(kt4.reference_rpm)
    await viewShot(page, 'limit-preview-refreshed-laptop')
    await page.setViewportSize(TABLET)
    await viewShot(page, 'limit-preview-refreshed-tablet')

    await dialog.locator('[data-test=preview-save]').click()
    await dialog.waitFor({ state: 'detached' })
    expect((await db()('engine_types').where('id', kt4.id).first()).reference_rpm).toBe(kt4.reference_rpm - 400)
    await page.close()
  })
})
