import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { USERS } from '../e2e/helpers'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

describe('engine allocation in Chromium', () => {
  it('proposes a plan with reasons, then shows the violation of a change made by hand; nothing is saved', async () => {
    const page = await signedInPage(browser, USERS.managerC)
    await page.goto('/allocation')
    await page.locator('[data-test=allocation-engines]').waitFor()
    expect(await page.locator('[data-test=allocation-engines]').textContent()).toContain('KT4-2104')
    expect(await page.locator('[data-test=allocation-entries]').textContent()).toContain('RLR-T-32')
    expect(await page.textContent('main')).toContain('never a substitute for the supplier')

    await page.click('[data-test=propose]')
    await page.getByText('proposed by the solver').waitFor()
    const plan = page.locator('[data-test=allocation-plan]')
    await plan.locator('[data-test=no-violations]').waitFor()
    expect(await plan.textContent()).toContain('to its warning level')
    expect(await plan.locator('[data-test=accept]').isDisabled()).toBe(false)
    await screenshot(page, 'allocation-proposal-laptop')

    // Both cars of the first round on one engine: the check names it and accepting is blocked.
    const selects = plan.locator('select')
    const firstEngine = await selects.nth(0).inputValue()
    await selects.nth(1).selectOption(firstEngine)
    await plan.locator('[data-test=violations]').waitFor()
    expect(await plan.locator('[data-test=violations]').textContent()).toMatch(/KT4-\d{4} is on 2 entries at Touring round/)
    expect(await plan.locator('[data-test=accept]').isDisabled()).toBe(true)
    expect(await page.getByText('changed by hand').count()).toBe(1)
    await page.setViewportSize(TABLET)
    await screenshot(page, 'allocation-violation-tablet')
    await page.close()
  })
})
