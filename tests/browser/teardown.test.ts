// A teardown on a tablet (820 x 1180): two readings, a finding with a photo, a swap and a second-person
// sign-off, on KT4-2103 (a Redfern engine on the shelf no other test file depends on).
import { mkdirSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { chromium, type Browser, type Page } from 'playwright-core'
import { DEMO_PASSWORD, USERS, db } from '../e2e/helpers'
import { tinyJpeg } from '../e2e/images'

const BASE = `http://127.0.0.1:${process.env.CL_TEST_PORT || '3390'}`
const ENGINE = 'KT4-2103'
const ARGS = ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run']

let browser: Browser
beforeAll(async () => {
  mkdirSync('screenshots', { recursive: true })
  browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ARGS })
})
afterAll(async () => {
  await browser?.close()
})

async function tabletAs(email: string): Promise<Page> {
  const context = await browser.newContext({ viewport: { width: 820, height: 1180 }, deviceScaleFactor: 1, hasTouch: true })
  const page = await context.newPage()
  await page.goto(`${BASE}/login`, { waitUntil: 'networkidle' })
  await page.fill('input[type=email]', email)
  await page.fill('input[type=password]', DEMO_PASSWORD)
  await Promise.all([page.waitForURL((u) => !u.pathname.startsWith('/login'), { waitUntil: 'commit' }), page.click('button[type=submit]')])
  return page
}

describe('teardown on a tablet', () => {
  it('records readings, a finding with a photo, a swap and a sign-off', async () => {
    const engine = await db()('engines').where('serial', ENGINE).first()
    const ct = await db()('component_types').where('code', 'KT4-ROD').first()
    const spare = `TDB-KT4ROD-${Date.now().toString(36)}`
    await db()('components').insert({ supplier_id: ct.supplier_id, component_type_id: ct.id, serial: spare, status: 'serviceable', born_at: new Date(Date.now() - 86_400_000) })

    const page = await tabletAs(USERS.supplierMechanic)
    await page.goto(`${BASE}/teardowns`, { waitUntil: 'networkidle' })
    await page.selectOption('#td-engine', String(engine.id))
    await page.selectOption('#td-reason', 'scheduled')
    await Promise.all([page.waitForURL(/\/teardowns\/\d+$/, { waitUntil: 'commit' }), page.click('[data-test=start-teardown] button[type=submit]')])
    const td = Number(new URL(page.url()).pathname.split('/').pop())

    // Two readings on conrod 1: one in tolerance, one high; the verdict shows while typing.
    const clearance = page.locator('[data-test="m-rod-1-big_end_clearance"]')
    const box = await clearance.boundingBox()
    expect(box!.height).toBeGreaterThanOrEqual(44)
    expect(await clearance.getAttribute('inputmode')).toBe('decimal')
    await clearance.fill('0.071')
    await expect.poll(() => page.locator('[data-test="v-rod-1-big_end_clearance"]').innerText()).toMatch(/HIGH/)
    await clearance.press('Tab')
    const bolt = page.locator('[data-test="m-rod-1-bolt_stretch"]')
    await bolt.fill('0.15')
    await expect.poll(() => page.locator('[data-test="v-rod-1-bolt_stretch"]').innerText()).toMatch(/in tolerance/)
    await bolt.press('Tab')
    await expect.poll(async () => (await db()('teardown_measurements').where('teardown_id', td)).length).toBe(2)
    await page.screenshot({ path: 'screenshots/teardown-sheet-tablet.png', fullPage: false })

    // A finding for the out-of-tolerance conrod, then a photo.
    await page.click('[data-test="finding-btn-rod-1"]')
    await page.selectOption('[data-test=f-condition]', 'scored')
    await page.selectOption('[data-test=f-disposition]', 'replace')
    await page.fill('[data-test=f-note]', 'Big-end shell scored')
    await page.click('[data-test=f-save]')
    await page.waitForSelector('[data-test="finding-rod-1"]')
    // a mechanic records findings; charging one to the team is the supplier engineer's call
    expect(await page.locator('[data-test^=charge-btn]').count()).toBe(0)
    await page.setInputFiles('[data-test="photo-rod-1"]', { name: 'rod1.jpg', mimeType: 'image/jpeg', buffer: tinyJpeg() })
    const img = page.locator('[data-test="finding-rod-1"] img')
    await img.waitFor()
    await expect.poll(() => img.evaluate((el: HTMLImageElement) => el.complete && el.naturalWidth)).toBe(8)
    await img.scrollIntoViewIfNeeded()
    await page.screenshot({ path: 'screenshots/teardown-finding-tablet.png' })

    // The swap.
    await page.selectOption('#sw-pos', 'rod-1')
    await page.fill('#sw-serial', spare)
    await page.fill('#sw-reason', 'Scored big end')
    await page.click('[data-test=swap-form] button[type=submit]')
    await page.locator('[data-test=swaps-table]').waitFor()
    expect(await page.locator('[data-test=swaps-table]').innerText()).toContain(spare)
    await page.click('[data-test=submit]')
    await expect.poll(() => page.locator('[data-test=td-state]').innerText()).toBe('awaiting sign-off')
    await page.locator('[data-test=sign-off]').scrollIntoViewIfNeeded()
    await page.screenshot({ path: 'screenshots/teardown-awaiting-tablet.png' })
    await page.context().close()

    // A second person signs.
    const signer = await tabletAs(USERS.supplierEngineer)
    await signer.goto(`${BASE}/teardowns/${td}`, { waitUntil: 'networkidle' })
    await signer.check('[data-test=sign-confirm]')
    await signer.click('[data-test=sign]')
    // sign-off recomputes the engine's life: allow a busy machine more than the default second
    await expect.poll(() => signer.locator('[data-test=td-state]').innerText(), { timeout: 15_000 }).toBe('signed off')
    await signer.locator('[data-test=sign-off]').scrollIntoViewIfNeeded()
    await signer.screenshot({ path: 'screenshots/teardown-signed-tablet.png' })
    const row = await db()('engines').where('id', engine.id).first()
    expect([row.status, row.location]).toEqual(['active', 'shelf'])

    // the supplier's engineer puts the conrod's damage down to the team: its lease contract prices it
    const finding = await db()('teardown_findings').where('teardown_id', td).first()
    const reason = 'Over-rev on the cool-down lap, in the logger file'
    await signer.click(`[data-test=charge-btn-${finding.id}]`)
    await signer.fill('[data-test=charge-reason]', reason)
    await signer.click('[data-test=charge-save]')
    await expect.poll(() => signer.locator(`[data-test=charge-${finding.id}]`).innerText()).toContain(`Charged to the team · ${reason}`)
    expect((await db()('finding_charges').where('finding_id', finding.id).first()).reason).toBe(reason)
    await signer.locator(`[data-test=charge-${finding.id}]`).scrollIntoViewIfNeeded()
    await signer.screenshot({ path: 'screenshots/teardown-finding-charged-tablet.png' })

    await signer.goto(`${BASE}/teardowns/${td}/report`, { waitUntil: 'networkidle' })
    await signer.locator('[data-test=report]').waitFor()
    expect(await signer.locator('[data-test=report]').innerText()).toContain('never replace')
    await signer.screenshot({ path: 'screenshots/teardown-report-tablet.png', fullPage: true })
    await signer.emulateMedia({ media: 'print' })
    await signer.screenshot({ path: 'screenshots/teardown-report-print.png', fullPage: true })
    await signer.context().close()
  })
})
