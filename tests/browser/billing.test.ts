// The supplier issues the demo's draft statement for Marlowe Vane Racing, the payment service
// reports it paid through its signed webhook, and the statement prints as an A4 invoice.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { BASE, db, USERS } from '../e2e/helpers'
import { launch, screenshot, signedInPage, TABLET } from './browser'

const FAKE = `http://127.0.0.1:${process.env.CL_PAYMENT_PORT || '12112'}`
// A4 at the CSS 96 px per inch: 210 x 297 mm.
const A4 = { width: 794, height: 1123 }

let browser: Browser
const created: number[] = []
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
  // the event statement computed below is a draft no other test reads
  if (created.length) await db()('statements').whereIn('id', created).delete()
})

describe('billing in the browser', () => {
  it('issues a statement, sees it paid after the webhook, and prints it as an invoice', async () => {
    const draft = await db()('statements as s').join('organisations as o', 'o.id', 's.team_id').where({ 'o.name': 'Marlowe Vane Racing', 's.state': 'draft' }).first('s.id', 's.total_minor')
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto(`${BASE}/billing`, { waitUntil: 'networkidle' })
    await page.locator('[data-test=contracts-table]').waitFor()
    expect(await page.locator('[data-test=statements-table]').first().innerText()).toContain('Marlowe Vane Racing')
    await screenshot(page, 'billing-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'billing-tablet')

    await page.goto(`${BASE}/statements/${draft.id}`, { waitUntil: 'networkidle' })
    await page.click('[data-test=review]')
    await page.locator('[data-test=issue]').click()
    await page.locator('[data-test=payment-status]', { hasText: 'open' }).waitFor()
    const number = (await page.locator('[data-test=statement-number]').innerText()).trim()
    expect(number).toMatch(/^ST-\d{4}-\d{5}$/)

    const row = await db()('statements').where('id', draft.id).first('invoice_id', 'payment_status')
    expect(row.payment_status).toBe('open')
    const paid = await (await fetch(`${FAKE}/_fake/invoices/${row.invoice_id}/pay`, { method: 'POST' })).json()
    expect(paid.webhookStatus).toBe(200)
    await page.reload({ waitUntil: 'networkidle' })
    await page.locator('[data-test=payment-status]', { hasText: 'paid' }).waitFor()
    await screenshot(page, 'statement-paid-tablet')

    // The printed invoice at A4: light, without the controls, the whole width of the sheet on the page.
    await page.setViewportSize(A4)
    await page.emulateMedia({ media: 'print' })
    await page.screenshot({ path: 'screenshots/statement-invoice-a4.png', fullPage: false })
    const sheet = page.locator('[data-test=statement-sheet]')
    const box = (await sheet.boundingBox())!
    expect(box.x).toBeGreaterThanOrEqual(0)
    expect(box.x + box.width).toBeLessThanOrEqual(A4.width)
    expect(await page.locator('.no-print').first().isVisible()).toBe(false)
    // innerText follows the labels' upper-case styling
    const text = (await sheet.innerText()).toLowerCase()
    for (const part of ['invoice', number, 'Keelbrook Engine Works', 'Bill to', 'Marlowe Vane Racing', 'Accounts@marlowe.test', 'Tax 20.00 %', 'Total EUR']) expect(text).toContain(part.toLowerCase())
    const pdf = await page.pdf({ format: 'A4', printBackground: true })
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
  })

  it('computes a statement for one event, and names the statement an overlapping event would bill twice', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto(`${BASE}/billing`, { waitUntil: 'networkidle' })
    const form = page.locator('[data-test=new-statement]')
    // Marlowe's recent months are on statements: its latest event would bill their sessions again
    const marlowe = await db()('organisations').where('name', 'Marlowe Vane Racing').first('id')
    await form.locator('#st-team').selectOption(String(marlowe.id))
    await form.locator('[data-test=period-event]').check()
    const latest = await db()('events').where('ends_at', '<', new Date()).orderBy('ends_at', 'desc').first('id', 'name')
    await form.locator('#st-event').selectOption(String(latest.id))
    await form.getByRole('button', { name: 'Compute draft' }).click()
    await expect.poll(() => form.getByRole('alert').innerText()).toMatch(new RegExp(`${latest.name}.*overlaps statement`))
    await screenshot(page, 'billing-event-refused-laptop')

    // Tidewater's oldest closed event is on no statement: a draft for that event alone
    const tidewater = await db()('organisations').where('name', 'Tidewater Apex Motorsport').first('id')
    const oldest = await db()('events').where('ends_at', '<', new Date()).orderBy('ends_at', 'asc').first('id', 'name')
    await form.locator('#st-team').selectOption(String(tidewater.id))
    await form.locator('#st-event').selectOption(String(oldest.id))
    await form.getByRole('button', { name: 'Compute draft' }).click()
    await page.waitForURL(/\/statements\/\d+$/)
    created.push(Number(new URL(page.url()).pathname.split('/').pop()))
    const row = await db()('statements').where('id', created[0]).first('period_kind', 'period_label', 'state', 'team_id')
    expect(row).toEqual({ period_kind: 'event', period_label: oldest.name, state: 'draft', team_id: tidewater.id })
    await expect.poll(() => page.locator('body').innerText()).toContain(oldest.name)
    await page.close()
  })
})
