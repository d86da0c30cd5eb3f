import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { db, USERS } from '../e2e/helpers'

// Two undeliverable mails of different kinds in the outbox (state failed, so no deliverer takes them),
// removed at the end.
let browser: Browser
const ids: number[] = []
beforeAll(async () => {
  browser = await launch()
  const now = new Date()
  for (const [kind, subject] of [['digest', 'Crankledger: your digest (admin page test)'], ['urgent', 'Crankledger: inspect now (admin page test)']]) {
    const [id] = await db()('mail_outbox').insert({ kind, to_address: 'nobody@admin-page.test', subject, html: '<p>test</p>', text: 'test', state: 'failed', attempts: 5, next_attempt_at: now, last_error: 'mail server refused (test)', created_at: now })
    ids.push(Number(id))
  }
})
afterAll(async () => {
  await browser?.close()
  await db()('mail_outbox').whereIn('id', ids).delete()
})

describe('the admin page in Chromium', () => {
  it('lists the outbox with each mail\'s kind, failed ones first', async () => {
    const page = await signedInPage(browser, USERS.admin)
    await page.goto('/admin')
    const rows = page.locator('[data-test=outbox] tbody tr')
    await rows.first().waitFor()
    const first = (await rows.nth(0).innerText()).replace(/\s+/g, ' ')
    const second = (await rows.nth(1).innerText()).replace(/\s+/g, ' ')
    // newest first within the failed ones
    expect(first).toContain('At once')
    expect(first).toContain('inspect now (admin page test)')
    expect(second).toContain('Digest')
    expect(second).toContain('your digest (admin page test)')
    expect(await page.locator('th', { hasText: 'Kind' }).count()).toBe(1)
    await screenshot(page, 'admin-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'admin-tablet')
    await page.close()
  })
})
