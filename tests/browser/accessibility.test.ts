// axe-core in Chromium on the main pages: no WCAG 2.0 / 2.1 level A or AA violation, in the
// garage (dark) theme and, for the sign-in page and the board, in the daylight theme as well.
// Pages are only read here; nothing is written.
import axe from 'axe-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { launch, signedInPage } from './browser'
import { BASE, db, USERS } from '../e2e/helpers'

const WCAG_A_AA = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']

interface Violation { rule: string; impact: string | null | undefined; help: string; count: number; nodes: string[] }

/** Runs axe on the page as it is shown; the script goes in through the DevTools protocol, so the page's CSP does not apply. */
async function violations(page: Page): Promise<Violation[]> {
  await page.evaluate(axe.source)
  return page.evaluate(async (tags) => {
    const result = await (window as any).axe.run(document, { runOnly: { type: 'tag', values: tags } })
    // the first few places of each, and how many there are: enough to find and fix them
    return result.violations.map((v: any) => ({ rule: v.id, impact: v.impact, help: v.help, count: v.nodes.length, nodes: v.nodes.slice(0, 3).map((n: any) => n.target.join(' ')) }))
  }, WCAG_A_AA)
}

async function open(page: Page, path: string, ready: string) {
  await page.goto(path, { waitUntil: 'networkidle' })
  await page.locator(ready).first().waitFor()
}

/** The violations per page, for the pages that have any, as the supplier engineer sees them. */
async function scan(paths: string[]): Promise<Record<string, Violation[]>> {
  const page = await signedInPage(browser, USERS.supplierEngineer)
  const found: Record<string, Violation[]> = {}
  for (const path of paths) {
    await open(page, path, 'main h1')
    const v = await violations(page)
    if (v.length) found[path] = v
  }
  await page.close()
  return found
}

let browser: Browser
let ids: { engine: number; part: number; session: number; teardown: number }
beforeAll(async () => {
  browser = await launch()
  // the demo engine with sessions, over-revs, oil samples and a teardown: every chart on its pages is drawn
  const engine = await db()('engines').where('serial', 'KT4-2201').first('id')
  const part = await db()('installations').where({ engine_id: engine.id, position: 'rod-3' }).whereNull('to_at').first('component_id')
  // a logged session with its traces and over-revs: the histogram and the trace charts
  const session = await db()('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('e.serial', 'KV8-1102').whereRaw("JSON_SEARCH(s.over_revs, 'one', 'C', NULL, '$[*].bandId') IS NOT NULL").first('s.id')
  const teardown = await db()('teardowns').where('engine_id', engine.id).orderBy('opened_at', 'desc').first('id')
  ids = { engine: engine.id, part: part.component_id, session: session.id, teardown: teardown.id }
})
afterAll(async () => {
  await browser?.close()
})

describe('accessibility of the main pages (axe-core, WCAG 2 A and AA)', () => {
  it('the sign-in page, in both themes', async () => {
    for (const theme of ['dark', 'light']) {
      const context = await browser.newContext({ baseURL: BASE })
      await context.addCookies([{ name: 'cl-theme', value: theme, url: BASE }])
      const page = await context.newPage()
      await open(page, '/login', 'button[type=submit]')
      expect(await violations(page), theme).toEqual([])
      await context.close()
    }
  }, 120_000)

  it('the board, in both themes', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await open(page, '/', '[data-test=board-row]')
    expect(await violations(page), 'dark').toEqual([])
    await page.context().addCookies([{ name: 'cl-theme', value: 'light', url: BASE }])
    await open(page, '/', '[data-test=board-row]')
    expect(await page.evaluate(() => document.documentElement.classList.contains('light'))).toBe(true)
    expect(await violations(page), 'light').toEqual([])
    await page.close()
  }, 120_000)

  it('the engine, part and session pages with their charts drawn', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    for (const [path, charts] of [[`/engines/${ids.engine}`, 3], [`/parts/${ids.part}`, 1], [`/sessions/${ids.session}`, 6]] as const) {
      await open(page, path, 'main h1')
      await expect.poll(() => page.locator('svg.apexcharts-svg').count(), { timeout: 30_000, message: path }).toBeGreaterThanOrEqual(charts)
      expect(await violations(page), path).toEqual([])
    }
    await page.close()
  }, 180_000)

  // a busy machine takes several seconds a page: a few pages per test, with room to spare
  it('the lists and the calendar', async () => {
    expect(await scan(['/engines', '/parts', '/sessions', '/events', '/engine-types'])).toEqual({})
  }, 180_000)

  it('the import pages and oil', async () => {
    expect(await scan(['/sessions/import', '/oil', `/oil/${ids.engine}`, '/oil/import'])).toEqual({})
  }, 180_000)

  it('teardowns, alerts, billing and the account page', async () => {
    expect(await scan(['/teardowns', `/teardowns/${ids.teardown}`, '/alerts', '/billing', '/settings/account'])).toEqual({})
  }, 180_000)

  it("a team manager's statements", async () => {
    const page = await signedInPage(browser, USERS.managerA)
    await open(page, '/statements', 'main h1')
    expect(await violations(page)).toEqual([])
    await page.close()
  })
})
