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

/** Waits until Nuxt has hydrated the page: before that a click on a server-rendered button does nothing. */
export async function hydrated(page: Page) {
  await page.waitForFunction(() => (document.querySelector('#__nuxt') as any)?.__vue_app__?.$nuxt?.isHydrating === false)
}

/** A page signed in as `email`; its goto and reload return once the page is hydrated. */
export async function signedInPage(browser: Browser, email: string, viewport = LAPTOP): Promise<Page> {
  const page = await browser.newPage({ viewport, baseURL: BASE })
  for (const method of ['goto', 'reload'] as const) {
    const original = (page[method] as (...args: unknown[]) => Promise<unknown>).bind(page)
    ;(page as any)[method] = async (...args: unknown[]) => {
      const response = await original(...args)
      await hydrated(page)
      return response
    }
  }
  await page.goto('/login')
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
