import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launch, screenshot, signedInPage, TABLET } from './browser'
import { db, signIn } from '../e2e/helpers'

let browser: Browser
beforeAll(async () => {
  browser = await launch()
})
afterAll(async () => {
  await browser?.close()
})

describe('logger import in Chromium', () => {
  it('previews a file, maps the columns, uploads and shows the result charts', async () => {
    // Semicolon-delimited with decimal commas and headers no profile knows, so the user maps them.
    const lines = ['Zeit;Drehzahl;Tempo']
    for (let i = 0; i < 2000; i++) lines.push(`${(i / 100).toFixed(2).replace('.', ',')};${i < 1000 ? 6250 : 7250};${(150 + i / 100).toFixed(1).replace('.', ',')}`)
    const dir = mkdtempSync(join(tmpdir(), 'cl-'))
    const file = join(dir, 'browser-fp2.csv')
    writeFileSync(file, lines.join('\n'))
    const engine = await db()('engines').where('serial', 'KT4-2102').first()

    const page = await signedInPage(browser, 'race@redfern.test')
    await page.goto(`/sessions/import?engine=${engine.id}`)
    await page.setInputFiles('[data-test=file-input]', file)
    await expect.poll(() => page.locator('[data-test=detected]').textContent()).toContain('semicolon')
    expect(await page.locator('[data-test=detected]').textContent()).toContain('comma')
    await page.selectOption('[data-test=map-time]', 'Zeit')
    await page.selectOption('[data-test=map-rpm]', 'Drehzahl')
    await page.selectOption('[data-test=map-speed]', 'Tempo')
    await screenshot(page, 'import-mapping')
    await page.click('[data-test=upload]')
    await page.waitForURL(/\/sessions\/\d+$/)
    await page.locator('[data-test=histogram-chart] svg').first().waitFor()
    await page.locator('[data-test=overview-chart] svg').first().waitFor()
    const summary = await page.locator('[data-test=session-summary]').textContent()
    expect(summary).toContain('0.3 min') // 19.99 s of running
    expect(summary).toContain('7250')
    expect(await page.locator('[data-test=cost-table] tbody tr').count()).toBeGreaterThan(5)
    await screenshot(page, 'import-result-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'import-result-tablet')
    await page.close()
  })

  it('finds the channel names after metadata lines, reads units from the units row and offers the logger\'s start', async () => {
    const lines = ['Format\tgeneric export', 'Vehicle\tcar 7', 'Date\t2026-11-21', 'Time\t14:02:10', '"Time"\t"Engine RPM"\t"Speed"', 'ms\trpm\tmph']
    for (let i = 0; i < 1500; i++) lines.push(`${i * 10}\t${i < 700 ? 6250 : 6750}\t100`)
    const dir = mkdtempSync(join(tmpdir(), 'cl-'))
    const file = join(dir, 'browser-layout.csv')
    writeFileSync(file, `\uFEFF${lines.join('\r\n')}\r\n`)
    const engine = await db()('engines').where('serial', 'KT4-2102').first()

    const page = await signedInPage(browser, 'race@redfern.test')
    await page.goto(`/sessions/import?engine=${engine.id}`)
    await page.setInputFiles('[data-test=file-input]', file)
    await expect.poll(() => page.locator('[data-test=layout]').textContent()).toContain('Channel names on line 5')
    expect(await page.locator('[data-test=detected]').textContent()).toContain('tab')
    expect(await page.locator('[data-test=preamble]').textContent()).toContain('car 7')
    expect(await page.locator('[data-test=units-from-row]').isChecked()).toBe(true)
    expect(await page.locator('#u-speed').inputValue()).toBe('mph')
    expect(await page.locator('#u-time').inputValue()).toBe('ms')
    await page.click('[data-test=use-logger-start]')
    expect(await page.locator('#i-start').inputValue()).toBe('2026-11-21T14:02')
    await page.selectOption('[data-test=map-speed]', 'Speed')
    await screenshot(page, 'import-layout-laptop')
    await page.setViewportSize(TABLET)
    await screenshot(page, 'import-layout-tablet')
    await page.click('[data-test=upload]')
    await page.waitForURL(/\/sessions\/\d+$/)
    expect(await page.locator('[data-test=logger-metadata]').textContent()).toContain('Logger metadata (4 lines)')
    const summary = await page.locator('[data-test=session-summary]').textContent()
    expect(summary).toContain('6750')
    await page.close()
  })

  it('uploads a compressed file in parts with its progress bar, and after a reload goes on from the last part', async () => {
    // about 1 MB of trace with noisy digits: several 64 KiB parts once compressed (scripts/test.sh sets the part size)
    const lines = ['time_s,engine_rpm,oil_temp_c']
    let x = 7
    for (let i = 0; i < 30000; i++) {
      x = (x * 48271) % 2147483647
      lines.push(`${(i / 100).toFixed(2)},${i < 15000 ? 5250 : 5750},${(90 + (x % 1000) / 100).toFixed(2)}`)
    }
    const dir = mkdtempSync(join(tmpdir(), 'cl-'))
    const file = join(dir, 'browser-resume.csv')
    writeFileSync(file, `${lines.join('\n')}\n`)
    const engine = await db()('engines').where('serial', 'KT4-2102').first()

    const page = await signedInPage(browser, 'race@redfern.test')
    await page.goto(`/sessions/import?engine=${engine.id}`)
    await page.setInputFiles('[data-test=file-input]', file)
    await expect.poll(() => page.locator('[data-test=detected]').textContent()).toContain('comma')
    // the link drops after two parts: the third part never arrives
    let parts = 0
    let dropped!: () => void
    const droppedNow = new Promise<void>((resolve) => (dropped = resolve))
    await page.route('**/api/uploads/*', async (route) => {
      if (route.request().method() === 'PATCH' && ++parts > 2) {
        dropped()
        return route.abort('connectionfailed')
      }
      return route.continue()
    })
    await page.click('[data-test=upload]')
    await droppedNow
    await expect.poll(() => page.locator('[data-test=progress-bytes]').textContent()).toMatch(/of [\d.]+ MiB compressed/)
    await screenshot(page, 'import-upload-progress')

    // reload, choose the same file again: the upload goes on where the server stopped
    await page.unrouteAll()
    const offsets: number[] = []
    page.on('request', (r) => {
      if (r.method() === 'PATCH' && r.url().includes('/api/uploads/')) offsets.push(Number(r.headers()['upload-offset']))
    })
    await page.reload()
    await page.setInputFiles('[data-test=file-input]', file)
    await expect.poll(() => page.locator('[data-test=detected]').textContent()).toContain('comma')
    await page.click('[data-test=upload]')
    await page.waitForURL(/\/sessions\/\d+$/)
    expect(offsets[0]).toBe(2 * 65536)
    const summary = await page.locator('[data-test=session-summary]').textContent()
    expect(summary).toContain('5750')
    await page.close()
  })

  it('imports several files dropped at once, each by its matching profile, each with its own result', async () => {
    const race = await signIn('race@redfern.test')
    const mapping = { columns: { time: 't_s', rpm: 'n_eng', speed: 'v_car' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
    expect((await race.post('/api/logger-profiles', { name: 'Batch test logger', header: ['t_s', 'n_eng', 'v_car'], mapping })).status).toBe(200)
    const dir = mkdtempSync(join(tmpdir(), 'cl-'))
    const files = [['batch-fp1.csv', '2026-11-20', '10:00:00', 5100], ['batch-fp2.csv', '2026-11-20', '14:30:00', 5300]] as const
    for (const [name, date, time, rpm] of files) {
      const lines = ['Logger export', `Date: ${date}`, `Time: ${time}`, 't_s,n_eng,v_car']
      for (let i = 0; i < 1000; i++) lines.push(`${(i / 100).toFixed(2)},${rpm},150`)
      writeFileSync(join(dir, name), `${lines.join('\n')}\n`)
    }
    const engine = await db()('engines').where('serial', 'KT4-2102').first()

    const page = await signedInPage(browser, 'race@redfern.test')
    await page.goto(`/sessions/import?engine=${engine.id}`)
    await page.setInputFiles('[data-test=file-input]', files.map(([name]) => join(dir, name)))
    await expect.poll(() => page.locator('[data-test=batch] tbody tr').count()).toBe(2)
    expect(await page.locator('[data-test=batch-row-0]').textContent()).toContain('Batch test logger')
    expect(await page.locator('[data-test=batch-row-1]').textContent()).toContain('2026-11-20 14:30')
    await page.click('[data-test=batch-upload]')
    for (const i of [0, 1]) await expect.poll(() => page.locator(`[data-test=batch-state-${i}]`).textContent(), { timeout: 30_000 }).toContain('stored')
    await screenshot(page, 'import-batch-laptop')
    const ids = await Promise.all([0, 1].map(async (i) => Number((await page.locator(`[data-test=batch-session-${i}]`).textContent())!.replace(/\D/g, ''))))
    const rows = await db()('sessions').whereIn('id', ids).orderBy('id')
    // each file its own session, started when its logger says
    expect(rows.map((r: any) => [r.file_name, new Date(r.started_at).toISOString(), r.max_rpm])).toEqual([
      ['batch-fp1.csv', '2026-11-20T10:00:00.000Z', 5100],
      ['batch-fp2.csv', '2026-11-20T14:30:00.000Z', 5300],
    ])
    await page.close()
  })
})
