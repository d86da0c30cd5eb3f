// The S3-compatible store away during uploads: 503 with a clear message, nothing half-stored (no
// session, no report named on the sample, no object); back again, the same upload is stored, and
// what one instance stored the other reads.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { APP_PORTS, count, importFile, loggerCsv, onNode, sha256, signIn, startApp, startStore, storedObjects, type App, type Store } from './cluster'

let store: Store | undefined
let a: App
let b: App
const pdf = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n')

beforeAll(async () => {
  store = await startStore()
  ;[a, b] = await Promise.all([startApp(APP_PORTS[0]), startApp(APP_PORTS[1])])
})

afterAll(async () => {
  await Promise.all([a?.stop(), b?.stop()])
  await store?.stop()
})

function reportForm() {
  const form = new FormData()
  form.append('file', new Blob([pdf], { type: 'application/pdf' }), 'lab-report.pdf')
  return form
}

describe('the file store away during an upload', () => {
  it('answers 503 and stores nothing, then stores the retry, readable from the other instance', async () => {
    const cookieA = await signIn(a.base, 'race@redfern.test')
    const cookieB = await signIn(b.base, 'race@redfern.test')
    const engine = await onNode(1, (db) => db('engines').where('serial', 'KT4-2104').first('id'))
    const sample = await onNode(1, (db) => db('oil_samples').where('engine_id', engine.id).whereNull('attachment_key').orderBy('id').first('id'))
    expect(sample).toBeTruthy()
    const file = loggerCsv(301)
    const objects = () => storedObjects('logger').length + storedObjects('oil').length
    const objectsBefore = objects()

    await store!.stop()
    store = undefined
    const refused = await importFile(a.base, cookieA, engine.id, file, 'store-away.csv')
    expect(refused.status).toBe(503)
    expect(refused.retryAfter).toMatch(/^\d+$/)
    expect(refused.body.message).toBe('The file store cannot be reached at the moment. Nothing was stored; try again in a few seconds.')
    const report = await fetch(`${b.base}/api/oil/samples/${sample.id}/report`, { method: 'POST', headers: { cookie: cookieB, origin: b.base }, body: reportForm() })
    expect(report.status).toBe(503)
    expect(((await report.json()) as any).message).toMatch(/file store/)
    expect(await count(1, 'sessions', { file_sha256: sha256(file) })).toBe(0)
    expect((await onNode(1, (db) => db('oil_samples').where('id', sample.id).first('attachment_key'))).attachment_key).toBeNull()
    // The rest of the app keeps working without the store.
    expect((await fetch(`${a.base}/api/board`, { headers: { cookie: cookieA } })).status).toBe(200)

    store = await startStore()
    expect(objects()).toBe(objectsBefore)
    const stored = await importFile(a.base, cookieA, engine.id, file, 'store-away.csv')
    expect(stored.status).toBe(201)
    const uploaded = await fetch(`${b.base}/api/oil/samples/${sample.id}/report`, { method: 'POST', headers: { cookie: cookieB, origin: b.base }, body: reportForm() })
    expect(uploaded.status).toBe(200)
    expect(await count(1, 'sessions', { file_sha256: sha256(file) })).toBe(1)
    expect(objects()).toBe(objectsBefore + 2)

    // Each instance reads what the other stored: the raw logger file (read again) and the lab's PDF.
    const reprocess = await fetch(`${b.base}/api/sessions/${stored.body.session.id}/reprocess`, { method: 'POST', headers: { cookie: cookieB, origin: b.base } })
    expect(reprocess.status).toBe(200)
    const pdfBack = await fetch(`${a.base}/api/oil/samples/${sample.id}/report`, { headers: { cookie: cookieA } })
    expect(pdfBack.status).toBe(200)
    expect(Buffer.from(await pdfBack.arrayBuffer()).equals(pdf)).toBe(true)
  })
})
