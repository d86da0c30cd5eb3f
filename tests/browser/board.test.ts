import { readFileSync } from 'node:fs'
import Papa from 'papaparse'
import { parse as parseCsv } from 'csv-parse/sync'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET, LAPTOP } from './browser'
import { db, signIn, USERS } from '../e2e/helpers'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

describe('fleet life board in Chromium', () => {
  it('lets a team manager filter the board, keeps the filter in the URL, and opens an engine with its charts', async () => {
    const page = await signedInPage(browser, USERS.managerA)
    await page.goto('/')
    await page.locator('[data-test=board-row]').first().waitFor()
    const all = await page.locator('[data-test=board-row]').count()
    expect(all).toBeGreaterThanOrEqual(3) // Marlowe's engines only
    const rows = await page.locator('[data-test=board-row] a.serial').allTextContents()
    expect(rows.every((s) => ['KV8-1101', 'KV8-1102', 'KV8-1103', 'KT4-2201'].includes(s.trim()))).toBe(true)
    await screenshot(page, 'board-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'board-tablet')
    await page.setViewportSize(LAPTOP)

    await page.selectOption('#b-loc', 'shelf')
    await page.waitForURL(/location=shelf/)
    await expect.poll(() => page.locator('[data-test=board-row]').count()).toBe(1)
    expect((await page.locator('[data-test=board-row] a.serial').textContent())?.trim()).toBe('KV8-1103')
    // The status is written out, not only coloured.
    expect(await page.locator('[data-test=board-row]').first().textContent()).toMatch(/Within life|Plan rebuild|Rebuild due|Do not run/)

    await page.click('[data-test=board-row] a.serial')
    await page.waitForURL(/\/engines\/\d+/)
    await page.locator('[data-test=build-sheet]').waitFor()
    // Life over time and the rev histogram; this engine has had no over-rev, so that chart says so instead.
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 15_000 }).toBeGreaterThanOrEqual(2)
    await screenshot(page, 'engine-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'engine-tablet')
    await page.close()
  })

  it('exports the board as CSV that parses back to the same numbers', async () => {
    const page = await signedInPage(browser, USERS.supplierEngineer)
    await page.goto('/?sort=serial')
    await page.locator('[data-test=board-row]').first().waitFor()
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-test=export-csv]')])
    const text = readFileSync((await download.path())!, 'utf8')
    await page.close()
    const rows = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true }).data
    // A second, independent parser reads the same file the same way.
    expect(parseCsv(text, { columns: true, skip_empty_lines: true })).toEqual(rows)
    const api = (await (await signIn(USERS.supplierEngineer)).get('/api/board?sort=serial')).body.engines as any[]
    expect(rows.map((r) => r.serial)).toEqual(api.map((e) => e.serial))
    for (const [i, e] of api.entries()) {
      expect(Number(rows[i]!.worst_used_percent)).toBeCloseTo(e.worst.fraction * 100, 1)
      expect(Number(rows[i]!.hours_since_rebuild)).toBeCloseTo(e.hoursSinceRebuild, 2)
      expect(rows[i]!.status).toBe(e.worst.status)
      expect(rows[i]!.governing_limit).toBe(e.worst.governing?.label ?? '')
    }
  })

  it('neutralises a cell that a spreadsheet would run as a formula, and keeps numbers numbers', async () => {
    // a text that reached the data (here an engine's chassis) and starts with "="
    const engine = await db()('engines').where('serial', 'KV8-1001').first()
    await db()('engines').where('id', engine.id).update({ chassis: '=cmd|x!A1' })
    await db()('life_revision').where('id', 1).increment('revision', 1)
    try {
      const page = await signedInPage(browser, USERS.supplierEngineer)
      await page.goto('/?q=KV8-1001')
      await page.locator('[data-test=board-row]').first().waitFor()
      const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-test=export-csv]')])
      const text = readFileSync((await download.path())!, 'utf8')
      await page.close()
      const rows = parseCsv(text, { columns: true, skip_empty_lines: true }) as Record<string, string>[]
      const row = rows.find((r) => r.serial === 'KV8-1001')!
      expect(row.chassis).toBe("'=cmd|x!A1")
      // nothing in the file starts a cell with a formula trigger, numbers aside
      for (const r of rows) for (const [k, v] of Object.entries(r)) {
        if (/^[=+\-@\t\r]/.test(v)) expect(Number.isFinite(Number(v)), `${k}: ${v}`).toBe(true)
      }
      expect(Number.isFinite(Number(row.worst_used_percent))).toBe(true)
      expect(Number.isFinite(Number(row.hours_total))).toBe(true)
    } finally {
      await db()('engines').where('id', engine.id).update({ chassis: engine.chassis })
      await db()('life_revision').where('id', 1).increment('revision', 1)
    }
  })
})
