// The alerts page in Chromium: grouped by engine, most severe first, filters in the address, and
// acknowledge-all for one engine. Its engine is made for this file and removed after it.
import nodemailer from 'nodemailer'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { computeFleetLife } from '../../server/services/life'
import { deliverOutbox } from '../../tasks/deliver-outbox'
import { runLifeCheck, type LifeCheckDeps } from '../../tasks/life-check'
import { mariadbLock } from '../../tasks/lock'
import { importTrace, makeAlertEngine, removeAlertEngine, threeOverRevs } from '../e2e/alert-helpers'
import { BASE, db, signIn, USERS } from '../e2e/helpers'
import { launch, screenshot, signedInPage, TABLET } from './browser'

const SERIAL = 'KV8-7741'
const transport = nodemailer.createTransport({ host: '127.0.0.1', port: Number(process.env.NUXT_SMTP_PORT || 1027), ignoreTLS: true })
const checkDeps: LifeCheckDeps = { db: db(), fleetLife: (now) => computeFleetLife(db(), now), now: () => new Date(), lock: mariadbLock(db()), instance: 'alerts-page-test', publicUrl: BASE }

let browser: Browser
let engineId: number

beforeAll(async () => {
  browser = await launch()
  engineId = await makeAlertEngine(SERIAL)
  const imported = await importTrace(await signIn(USERS.raceA), engineId, threeOverRevs(), 'page-over-revs.csv')
  expect(imported.status, JSON.stringify(imported.body)).toBe(201)
  expect((await runLifeCheck(checkDeps)).outcome).toBe('ok')
  await deliverOutbox({ db: db(), transport, now: () => new Date(), from: 'Crankledger <alerts@crankledger.local>', instance: 'alerts-page-test' })
})

afterAll(async () => {
  await browser?.close()
  await removeAlertEngine(engineId)
  transport.close()
})

describe('alerts page', () => {
  it('groups by engine with the most severe and newest first, filters, and acknowledges all of one engine only', async () => {
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto('/alerts')
    const groups = page.locator('[data-engine-group]')
    await groups.first().waitFor()
    expect(await groups.first().getAttribute('data-engine-group')).toBe(SERIAL)
    const ours = page.locator(`[data-engine-group="${SERIAL}"]`)
    expect(await ours.locator('[data-test=open-count]').textContent()).toBe('3 open · 3 shown')
    expect(await ours.locator('[data-alert]').evaluateAll((els) => els.map((e) => e.getAttribute('data-level')))).toEqual(['over', 'over', 'inspection'])
    expect(await ours.locator('[data-alert][data-level=inspection] [data-test=alert-parts] > li').count()).toBe(7) // six parts shown, then "3 more"
    const otherEngines = await groups.count()
    expect(otherEngines).toBeGreaterThan(1)
    await screenshot(page, 'alerts-grouped-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'alerts-grouped-tablet')
    await page.setViewportSize({ width: 1366, height: 900 })

    // Filters go into the address: cause "Over-rev" leaves the over-rev verdicts only.
    await page.selectOption('select[name=cause]', 'over-rev')
    await page.waitForURL(/cause=over-rev/)
    await expect.poll(() => ours.locator('[data-alert]').count()).toBe(1)
    expect(await page.locator('[data-alert]').evaluateAll((els) => els.every((e) => e.getAttribute('data-level') === 'inspection' || e.getAttribute('data-level') === 'critical'))).toBe(true)
    await page.goto(`/alerts?engine=${engineId}`)
    await expect.poll(() => groups.count()).toBe(1)

    // Acknowledge-all on this engine: its three alerts, nothing else.
    await page.goto('/alerts')
    const openElsewhere = await db()('alerts as a').whereNot('a.engine_id', engineId).whereNotExists(db()('alert_acks').whereRaw('alert_acks.alert_id = a.id')).count({ n: '*' }).first()
    await ours.locator('[data-test=ack-all]').click()
    await ours.locator(`#ack-all-${engineId}`).fill('Engine back to the supplier for inspection')
    await ours.locator('[data-test=ack-all-form] button[type=submit]').click()
    await expect.poll(() => ours.count()).toBe(0)
    expect(await groups.count()).toBe(otherEngines - 1)
    const acks = await db()('alert_acks as k').join('alerts as a', 'a.id', 'k.alert_id').where('a.engine_id', engineId).pluck('k.comment')
    expect(acks).toEqual(['Engine back to the supplier for inspection', 'Engine back to the supplier for inspection', 'Engine back to the supplier for inspection'])
    const stillOpen = await db()('alerts as a').whereNot('a.engine_id', engineId).whereNotExists(db()('alert_acks').whereRaw('alert_acks.alert_id = a.id')).count({ n: '*' }).first()
    expect(Number(stillOpen!.n)).toBe(Number(openElsewhere!.n))
    await page.close()
  })
})

describe('alert settings page', () => {
  it('keeps the digest and switches off the urgent mail at once, and says so after saving', async () => {
    const manager = await signIn(USERS.managerA)
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto('/settings/alerts')
    const immediate = page.locator('input[name=immediate]')
    await immediate.waitFor()
    expect(await page.locator('input[name=digest]').isChecked()).toBe(true)
    expect(await immediate.isChecked()).toBe(true)
    try {
      await immediate.uncheck()
      await page.click('form button[type=submit]')
      await expect.poll(() => page.locator('[role=status]').textContent()).toBe('Saved.')
      expect((await manager.get('/api/me/alert-prefs')).body).toMatchObject({ digest: true, immediate: false })
      await screenshot(page, 'alert-settings-laptop')
      await page.setViewportSize(TABLET)
      await screenshot(page, 'alert-settings-tablet')
    } finally {
      await manager.put('/api/me/alert-prefs', { immediate: true })
      await page.close()
    }
  })
})
