import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { signIn, USERS } from '../e2e/helpers'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

describe('the shell in Chromium', () => {
  it('refuses a wrong password on the sign-in page with a readable message', async () => {
    const page = await browser.newPage({ baseURL: process.env.NUXT_PUBLIC_URL })
    await page.goto('/login')
    await page.locator('button[type=submit]:enabled').waitFor()
    await page.fill('#email', USERS.managerC)
    await page.fill('#password', 'not-my-password')
    await page.click('button[type=submit]')
    await expect.poll(() => page.locator('[data-test=login-error]').textContent()).toBe('E-mail or password is wrong.')
    await screenshot(page, 'login-error')
    await page.close()
  })

  it('serves the sign-in button disabled until the page is hydrated (the browser never sends the password itself)', async () => {
    const html = await (await fetch(`${process.env.NUXT_PUBLIC_URL}/login`)).text()
    expect(html).toMatch(/<button[^>]*type="submit"[^>]*disabled/)
  })

  it('signs in and shows the navigation shell with who is signed in', async () => {
    const page = await signedInPage(browser, USERS.managerA)
    await expect.poll(() => page.locator('[data-test=whoami]').textContent()).toContain('Jonas Pike')
    const nav = await page.locator('nav[aria-label=Main] a').allTextContents()
    expect(nav.map((n) => n.trim())).toEqual(expect.arrayContaining(['Board', 'Engines', 'Parts', 'Calendar', 'Users']))
    await screenshot(page, 'shell-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'shell-tablet')
    await page.click('[data-test=sign-out]')
    await page.waitForURL(/\/login/)
    await page.close()
  })

  it('hides user management from a race engineer', async () => {
    const page = await signedInPage(browser, USERS.raceA)
    const nav = await page.locator('nav[aria-label=Main] a').allTextContents()
    expect(nav.map((n) => n.trim())).not.toContain('Users')
    await page.close()
  })

  it('opens the account page from the name, lists where the user is signed in, and signs out everywhere', async () => {
    const other = await signIn(USERS.mechanicA) // the same user on another device
    const page = await signedInPage(browser, USERS.mechanicA)
    await page.click('[data-test=whoami]')
    await page.waitForURL(/\/settings\/account/)
    await page.locator('[data-test=session-row]').first().waitFor()
    expect(await page.locator('[data-test=session-row]').count()).toBeGreaterThanOrEqual(2)
    expect(await page.locator('[data-test=this-browser]').count()).toBe(1)
    expect(await page.locator('[data-test=session-rules]').textContent()).toMatch(/30 minutes without use, 12 hours after signing in/)
    await screenshot(page, 'account-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'account-tablet')
    await page.click('[data-test=sign-out-everywhere]')
    await page.waitForURL(/\/login/)
    // the other device is signed out as well, and this browser cannot go back in
    expect((await other.get('/api/me')).status).toBe(401)
    await page.goto('/')
    await page.waitForURL(/\/login/)
    await page.close()
  })
})
