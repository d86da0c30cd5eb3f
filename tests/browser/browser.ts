import { mkdirSync } from 'node:fs'
import { chromium, type Browser, type Page } from 'playwright-core'
import { BASE, DEMO_PASSWORD } from '../e2e/helpers'

// Debian's Chromium, kept off the network; never a downloaded browser.
export async function launch(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE localhost, EXCLUDE 127.0.0.1'],
  })
}

export const LAPTOP = { width: 1366, height: 900 }
export const TABLET = { width: 820, height: 1180 }

export async function signedInPage(browser: Browser, email: string, viewport = LAPTOP): Promise<Page> {
  const page = await browser.newPage({ viewport, baseURL: BASE })
  await page.goto('/login')
  // the button is enabled once the page is hydrated: values typed before that would be reset
  await page.locator('button[type=submit]:enabled').waitFor()
  await page.fill('#email', email)
  await page.fill('#password', DEMO_PASSWORD)
  await page.click('button[type=submit]')
  await page.waitForURL((url) => !url.pathname.startsWith('/login'))
  return page
}

export async function screenshot(page: Page, name: string) {
  mkdirSync('screenshots', { recursive: true })
  await page.screenshot({ path: `screenshots/${name}.png`, fullPage: true })
}
