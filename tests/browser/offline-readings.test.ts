// No reading lost on a dropping link, in Chromium with its network set offline: readings typed on the
// teardown sheet are kept in the browser and shown as not sent, then stored in the order typed when the
// connection returns; they survive a reload; a reading changed meanwhile by someone else is shown as a
// conflict, not overwritten. The oil form keeps a sample saved offline the same way.
// On an engine of its own, so no other test file's teardown or oil figures move.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { mkdirSync } from 'node:fs'
import { LAPTOP, TABLET, launch, signedInPage } from './browser'
import { type Client, USERS, db, signIn } from '../e2e/helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from '../e2e/fresh-engine'

let browser: Browser
let engine: FreshEngine
let engineer: Client
let workshop: Client
let td = 0
const part: Record<string, number> = {}

beforeAll(async () => {
  browser = await launch()
  engine = await freshEngine('OFL', { typeCode: 'KT4-20' })
  ;[engineer, workshop] = await Promise.all([signIn(USERS.supplierEngineer), signIn(USERS.supplierMechanic)])
  const start = await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'scheduled' })
  expect(start.status, JSON.stringify(start.body)).toBe(201)
  td = start.body.id
  for (const p of (await workshop.get(`/api/teardowns/${td}`)).body.parts) part[p.position] = p.componentId
})

afterAll(async () => {
  await browser?.close()
  await db()('oil_samples').where('engine_id', engine.id).delete()
  await db()('teardowns').where('engine_id', engine.id).delete()
  await removeFreshEngines([engine])
})

/** The stored reading of a part's characteristic, read back through the API. */
async function stored(position: string, key: string) {
  const sheet = await workshop.get(`/api/teardowns/${td}`)
  return sheet.body.parts.find((p: any) => p.componentId === part[position]).rows.find((r: any) => r.key === key).measurement as { value: number; version: number; at: string; measuredByName: string } | null
}

/** A screenshot of the viewport with the element near its top (a full page of the sheet is too tall to read). */
async function shot(page: Page, name: string, selector: string) {
  await page.locator(selector).first().evaluate((el) => el.scrollIntoView({ block: 'start' }))
  await page.evaluate(() => window.scrollBy(0, -80))
  mkdirSync('screenshots', { recursive: true })
  await page.screenshot({ path: `screenshots/${name}.png` })
}

async function type(page: Page, position: string, key: string, value: string) {
  const field = page.locator(`[data-test="m-${position}-${key}"]`)
  await field.fill(value)
  await field.press('Tab')
}

describe('teardown readings on a dropping link', () => {
  it('keeps three readings typed offline as not sent, then stores them in the order typed', async () => {
    const page = await signedInPage(browser, USERS.supplierMechanic, LAPTOP)
    await page.goto(`/teardowns/${td}`, { waitUntil: 'networkidle' })
    await page.context().setOffline(true)
    await page.locator('[data-test=outbox-offline]').waitFor()

    // Typed out of sheet order, so the order stored can only come from the order typed.
    await type(page, 'rod-3', 'bolt_stretch', '0.152')
    await type(page, 'rod-1', 'big_end_clearance', '0.045')
    await type(page, 'rod-2', 'bolt_stretch', '0.148')
    for (const [pos, key] of [['rod-3', 'bolt_stretch'], ['rod-1', 'big_end_clearance'], ['rod-2', 'bolt_stretch']]) {
      await expect.poll(() => page.locator(`[data-test="pending-${pos}-${key}"]`).innerText()).toMatch(/not sent yet/)
    }
    expect(await page.locator('[data-test=outbox-waiting]').innerText()).toMatch(/3 readings not sent yet/)
    expect(await page.inputValue('[data-test="m-rod-1-big_end_clearance"]')).toBe('0.045')
    // No sign-off request while readings wait on this device.
    expect(await page.isDisabled('[data-test=submit]')).toBe(true)
    expect(await page.locator('[data-test=unsent-readings]').innerText()).toMatch(/3 reading\(s\) on this device are not stored yet/)
    expect(await stored('rod-3', 'bolt_stretch')).toBeNull()
    expect(await stored('rod-1', 'big_end_clearance')).toBeNull()
    expect(await stored('rod-2', 'bolt_stretch')).toBeNull()
    await shot(page, 'offline-teardown-not-sent-laptop', '[data-test=outbox]')
    await page.setViewportSize(TABLET)
    await shot(page, 'offline-teardown-not-sent-tablet', '[data-test=outbox]')

    await page.context().setOffline(false)
    await expect.poll(() => page.locator('[data-test=outbox]').count(), { timeout: 15_000 }).toBe(0)
    const third = await stored('rod-3', 'bolt_stretch')
    const first = await stored('rod-1', 'big_end_clearance')
    const second = await stored('rod-2', 'bolt_stretch')
    expect([third?.value, first?.value, second?.value]).toEqual([0.152, 0.045, 0.148])
    expect([third?.version, first?.version, second?.version]).toEqual([1, 1, 1])
    // Stored one after the other, in the order typed.
    expect(Date.parse(third!.at)).toBeLessThan(Date.parse(first!.at))
    expect(Date.parse(first!.at)).toBeLessThan(Date.parse(second!.at))
    const audited = await db()('audit_log').where('entity', 'teardown_measurement').where('after_value', 'like', `%${engine.serial}%`).orderBy('id').select('after_value')
    const keys = audited.map((a: any) => (typeof a.after_value === 'string' ? JSON.parse(a.after_value) : a.after_value)).map((a: any) => `${a.serial}:${a.key}`)
    expect(keys).toEqual([`${engine.serial}-P4:bolt_stretch`, `${engine.serial}-P2:big_end_clearance`, `${engine.serial}-P3:bolt_stretch`])
    expect(await page.inputValue('[data-test="m-rod-2-bolt_stretch"]')).toBe('0.148')
    expect(await page.isDisabled('[data-test=submit]')).toBe(false)
    await page.close()
  })

  it('keeps a reading over a reload and shows a conflict with a reading changed meanwhile by someone else', async () => {
    const before = await engineer.put(`/api/teardowns/${td}/measurements`, { componentId: part['rod-4'], key: 'big_end_clearance', value: 0.04, baseVersion: 0 })
    expect(before.status).toBe(200)
    const page = await signedInPage(browser, USERS.supplierMechanic, LAPTOP)
    await page.goto(`/teardowns/${td}`, { waitUntil: 'networkidle' })
    expect(await page.inputValue('[data-test="m-rod-4-big_end_clearance"]')).toBe('0.04')

    await page.context().setOffline(true)
    await type(page, 'rod-4', 'big_end_clearance', '0.05')
    await page.locator('[data-test="pending-rod-4-big_end_clearance"]').waitFor()
    // Meanwhile the supplier engineer corrects the same reading from the version the mechanic saw.
    const theirs = await engineer.put(`/api/teardowns/${td}/measurements`, { componentId: part['rod-4'], key: 'big_end_clearance', value: 0.043, baseVersion: 1 })
    expect(theirs.body.version).toBe(2)

    // The link comes back for pages but not yet for the write: the reloaded page still holds the reading.
    await page.context().route('**/api/teardowns/*/measurements', (route) => route.abort('internetdisconnected'))
    await page.context().setOffline(false)
    await page.reload({ waitUntil: 'networkidle' })
    await page.locator('[data-test="pending-rod-4-big_end_clearance"]').waitFor()
    expect(await page.inputValue('[data-test="m-rod-4-big_end_clearance"]')).toBe('0.05')
    await expect.poll(() => page.locator('[data-test=outbox-problem]').innerText()).toMatch(/could not be reached/)
    expect((await stored('rod-4', 'big_end_clearance'))?.value).toBe(0.043)

    await page.context().unroute('**/api/teardowns/*/measurements')
    await page.click('[data-test=send-now]')
    const conflict = page.locator('[data-test="conflict-rod-4-big_end_clearance"]')
    await conflict.waitFor()
    const text = await conflict.innerText()
    expect(text).toMatch(/Changed by someone else meanwhile/)
    expect(text).toMatch(/Stored now: 0\.043 mm \(in tolerance\) by /)
    expect(text).toMatch(/Yours: 0\.05 mm, not stored/)
    // Not overwritten: the other user's reading stays stored.
    expect(await stored('rod-4', 'big_end_clearance')).toMatchObject({ value: 0.043, version: 2 })
    await shot(page, 'offline-teardown-conflict-laptop', '[data-test=outbox]')
    await page.setViewportSize(TABLET)
    await shot(page, 'offline-teardown-conflict-tablet', '[data-test="part-rod-4"]')

    // Having seen theirs, the mechanic sends the reading over it.
    await page.click('[data-test="conflict-rod-4-big_end_clearance"] [data-test=send-mine]')
    await expect.poll(async () => (await stored('rod-4', 'big_end_clearance'))?.value).toBe(0.05)
    expect((await stored('rod-4', 'big_end_clearance'))?.version).toBe(3)
    await expect.poll(() => page.locator('[data-test="conflict-rod-4-big_end_clearance"]').count()).toBe(0)
    await page.close()
  })
})

describe('oil form on a dropping link', () => {
  it('keeps a sample saved offline as not sent and stores it when the connection returns', async () => {
    const page = await signedInPage(browser, USERS.raceA, TABLET)
    await page.goto(`/oil/new?engineId=${engine.id}`, { waitUntil: 'networkidle' })
    const labNumber = `OFL-${Date.now().toString(36).toUpperCase()}`
    await page.context().setOffline(true)
    await page.fill('#o-id', labNumber)
    await page.fill('#o-engineHours', '4.5')
    await page.fill('#o-kv100', '11.1')
    await page.fill('#o-el-Fe', '12')
    await page.click('button[type=submit]')
    await expect.poll(() => page.locator('[data-test=outbox-entry]').innerText()).toMatch(new RegExp(`not sent yet\\s*${engine.serial} · sample ${labNumber}`))
    expect(await page.locator('[data-test=kept-notice]').innerText()).toContain(labNumber)
    expect(await db()('oil_samples').where('sample_id', labNumber).first()).toBeUndefined()
    await shot(page, 'offline-oil-not-sent-tablet', 'h1')
    await page.setViewportSize(LAPTOP)
    await shot(page, 'offline-oil-not-sent-laptop', 'h1')

    await page.context().setOffline(false)
    await expect.poll(() => page.locator('[data-test=outbox]').count(), { timeout: 15_000 }).toBe(0)
    const samples = (await signIn(USERS.raceA).then((c) => c.get(`/api/oil/engines/${engine.id}`))).body.samples
    expect(samples.find((s: any) => s.sampleId === labNumber)).toMatchObject({ engineHours: 4.5, kv100: 11.1, elements: { Fe: 12 }, version: 1 })
    await page.close()
  })
})
