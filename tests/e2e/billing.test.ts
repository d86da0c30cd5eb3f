// Lease statements and invoices end to end, against the local payment fake that `npm test` starts
// (scripts/payment-fake.ts). Uses Redfern Lattice Racing's statements, and Tidewater's for the
// outage (the demo's Marlowe statements belong to the browser test); months are the last closed ones.
import Stripe from 'stripe'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPaymentFake, type PaymentFake } from '../../scripts/payment-fake'
import { Client, db, signIn, USERS } from './helpers'
import { freePort, startServer, type ExtraServer } from './servers'

const FAKE = `http://127.0.0.1:${process.env.CL_PAYMENT_PORT || '12112'}`
const WEBHOOK_SECRET = 'whsec_crankledger_local_secret'

function month(back: number) {
  const now = new Date()
  return new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - back, 1)).toISOString().slice(0, 7)
}

async function fakeState(): Promise<{ customers: any[]; invoices: any[]; calls: any[] }> {
  return (await fetch(`${FAKE}/_fake/state`)).json()
}
const invoicesOf = async (statementId: number) => (await fakeState()).invoices.filter((i) => i.metadata.statement_id === String(statementId))

let admin: Client
let engineer: Client
let redfernId: number
let contract: Record<string, unknown>

beforeAll(async () => {
  admin = await signIn(USERS.admin)
  engineer = await signIn(USERS.supplierEngineer)
  redfernId = (await db()('organisations').where('name', 'Redfern Lattice Racing').first('id')).id
  const kt4 = await db()('engine_types').where('code', 'KT4-20').first('id')
  contract = { teamId: redfernId, engineTypeId: kt4.id, validFrom: '2030-01-01', validTo: '2030-12-31', currency: 'EUR', feeBasis: 'event', feeMinor: 100_000, allowanceUnit: 'km', allowance: 500, overageRateMinor: 120, taxRateBp: 2000 }
})

async function reviewed(monthKey: string, teamId = redfernId): Promise<number> {
  const gen = await engineer.post('/api/billing/statements', { teamId, month: monthKey })
  expect(gen.status, JSON.stringify(gen.body)).toBe(201)
  expect(gen.body.lines.length).toBeGreaterThan(0)
  const rev = await engineer.post(`/api/billing/statements/${gen.body.id}/review`)
  expect(rev.status).toBe(200)
  return gen.body.id
}

describe('lease contracts refuse bad input with the field named', () => {
  it.each([
    ['negative money', { feeMinor: -1 }, 'feeMinor'],
    ['money that is not whole minor units', { overageRateMinor: 1.5 }, 'overageRateMinor'],
    ['an unknown currency', { currency: 'EUX' }, 'currency'],
    ['an engine and an engine type at once', { engineId: 1 }, 'engineId'],
    ['an end before the start', { validTo: '2029-12-31' }, 'validTo'],
  ])('%s', async (_name, change, field) => {
    const before = await db()('lease_contracts').count({ n: '*' }).first()
    const res = await engineer.post('/api/billing/contracts', { ...contract, ...change })
    expect(res.status).toBe(400)
    expect(res.body.message).toContain(field)
    expect((await db()('lease_contracts').count({ n: '*' }).first())!.n).toBe(before!.n)
  })

  it('creates a contract, and refuses one that overlaps it for the same engine type', async () => {
    const ok = await engineer.post('/api/billing/contracts', contract)
    expect(ok.status, JSON.stringify(ok.body)).toBe(201)
    expect(ok.body).toMatchObject({ teamId: redfernId, currency: 'EUR', feeMinor: 100_000, validFrom: '2030-01-01' })
    expect(await db()('audit_log').where({ entity: 'lease_contract', entity_id: String(ok.body.id), action: 'create' }).first()).toBeTruthy()
    const clash = await engineer.post('/api/billing/contracts', { ...contract, validFrom: '2030-06-01', validTo: '2031-05-31' })
    expect(clash.status).toBe(409)
    expect(clash.body.message).toContain('validFrom')
    expect(clash.body.message).toContain(`contract ${ok.body.id}`)
  })

  it('ends a contract early, from today on only, so what was billed keeps its terms; then the new term fits', async () => {
    const id = (await db()('lease_contracts').where({ team_id: redfernId, valid_from: '2030-01-01' }).first('id')).id
    const end = (validTo: string) => engineer.post(`/api/billing/contracts/${id}/end`, { validTo })
    const past = await end('2020-01-31')
    expect(past.status).toBe(400)
    expect(past.body.message).toMatch(/validTo: 2020-01-31 is in the past/)
    expect((await end('2029-12-31')).body.message).toContain('validTo: must not be before validFrom (2030-01-01)')
    const same = await end('2030-12-31')
    expect(same.status).toBe(409)
    expect(same.body.message).toContain('already ends on 2030-12-31')
    expect((await end('30 June')).status).toBe(400)
    expect((await engineer.post('/api/billing/contracts/999999/end', { validTo: '2030-06-30' })).status).toBe(404)
    expect((await (await signIn(USERS.managerC)).post(`/api/billing/contracts/${id}/end`, { validTo: '2030-06-30' })).status).toBe(403)
    expect(await db()('audit_log').where({ entity: 'lease_contract', entity_id: String(id), action: 'end' }).first()).toBeUndefined()

    const ended = await end('2030-05-31')
    expect(ended.status, JSON.stringify(ended.body)).toBe(200)
    expect(ended.body).toMatchObject({ id, validFrom: '2030-01-01', validTo: '2030-05-31' })
    const trail = await db()('audit_log').where({ entity: 'lease_contract', entity_id: String(id), action: 'end' }).first()
    const parsed = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parsed(trail.before_value)).toEqual({ validTo: '2030-12-31' })
    expect(parsed(trail.after_value)).toEqual({ validTo: '2030-05-31' })
    // the term that overlapped before now fits
    const next = await engineer.post('/api/billing/contracts', { ...contract, validFrom: '2030-06-01', validTo: '2031-05-31', feeMinor: 110_000 })
    expect(next.status, JSON.stringify(next.body)).toBe(201)
  })

  it('team roles cannot write contracts', async () => {
    const manager = await signIn(USERS.managerC)
    expect((await manager.post('/api/billing/contracts', contract)).status).toBe(403)
    expect((await manager.get('/api/billing/contracts')).status).toBe(403)
  })
})

describe('statements', () => {
  it('refuses a period that is not closed, naming it', async () => {
    const res = await engineer.post('/api/billing/statements', { teamId: redfernId, month: month(0) })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/month: .* not closed/)
  })

  it('refuses to issue a draft, and a team with no billing contact, writing nothing', async () => {
    const gen = await engineer.post('/api/billing/statements', { teamId: redfernId, month: month(1) })
    expect(gen.status).toBe(201)
    // every line names its evidence: the sessions behind a fee or the kilometres
    for (const l of gen.body.lines.filter((x: any) => x.kind === 'usage' || x.kind === 'fee')) expect(l.evidence.sessionIds.length).toBeGreaterThan(0)
    const draft = await engineer.post(`/api/billing/statements/${gen.body.id}/issue`)
    expect(draft.status).toBe(409)
    expect(draft.body.message).toContain('review')
    expect((await engineer.post(`/api/billing/statements/${gen.body.id}/review`)).status).toBe(200)
    const noContact = await engineer.post(`/api/billing/statements/${gen.body.id}/issue`)
    expect(noContact.status).toBe(400)
    expect(noContact.body.message).toContain('billingEmail')
    const row = await db()('statements').where('id', gen.body.id).first()
    expect(row.state).toBe('reviewed')
    expect(row.number).toBeNull()
    expect(await db()('invoice_outbox').where('statement_id', gen.body.id).first()).toBeUndefined()
  })

  it('issues once: one customer per team and one invoice per statement across a retry', async () => {
    const contact = await engineer.put(`/api/billing/contacts/${redfernId}`, { billingEmail: 'ledger@redfern.test', billingAddress: '8 Weir Street\nColdharbour CH2 4NP', taxId: null })
    expect(contact.status).toBe(200)
    const id = (await db()('statements').where({ team_id: redfernId, period_key: month(1) }).first('id')).id
    const issued = await engineer.post(`/api/billing/statements/${id}/issue`)
    expect(issued.status, JSON.stringify(issued.body)).toBe(200)
    expect(issued.body).toMatchObject({ state: 'issued', paymentStatus: 'open' })
    expect(issued.body.number).toMatch(/^ST-\d{4}-\d{5}$/)
    expect(issued.body.team).toMatchObject({ name: 'Redfern Lattice Racing', email: 'ledger@redfern.test' })
    const [invoice] = await invoicesOf(id)
    expect(await invoicesOf(id)).toHaveLength(1)
    // the invoice carries every charged line plus the tax, and totals the statement
    expect(invoice.total).toBe(issued.body.totalMinor)
    expect(invoice.status).toBe('open')
    expect(invoice.currency).toBe('eur')

    // A retry: the same statement issued again, and its outbox row delivered again.
    expect((await engineer.post(`/api/billing/statements/${id}/issue`)).status).toBe(200)
    await db()('invoice_outbox').where('statement_id', id).update({ state: 'pending', next_attempt_at: new Date('2000-01-01T00:00:00Z') })
    expect((await admin.post('/api/billing/deliver')).status).toBe(200)
    expect(await invoicesOf(id)).toHaveLength(1)
    const state = await fakeState()
    expect(state.customers.filter((c) => c.metadata.team_id === String(redfernId))).toHaveLength(1)
    // the redelivery was answered from the idempotency keys derived from the statement
    expect(state.calls.filter((c) => c.replayed && c.idempotencyKey?.startsWith(`crankledger-statement-${id}-`)).length).toBeGreaterThan(0)
  })

  it('two issuers at once produce one invoice', async () => {
    const id = await reviewed(month(2))
    const other = await signIn(USERS.admin)
    const [a, b] = await Promise.all([engineer.post(`/api/billing/statements/${id}/issue`), other.post(`/api/billing/statements/${id}/issue`)])
    expect([a.status, b.status]).toEqual([200, 200])
    expect(a.body.number).toBe(b.body.number)
    expect(await invoicesOf(id)).toHaveLength(1)
    expect((await fakeState()).customers.filter((c) => c.metadata.team_id === String(redfernId))).toHaveLength(1)
    expect(await db()('invoice_outbox').where('statement_id', id)).toHaveLength(1)
  })

  it('a signed webhook marks the statement paid; a replayed or forged one is refused and changes nothing', async () => {
    const id = (await db()('statements').where({ team_id: redfernId, period_key: month(1) }).first('id')).id
    const [invoice] = await invoicesOf(id)
    const paid = await (await fetch(`${FAKE}/_fake/invoices/${invoice.id}/pay`, { method: 'POST' })).json()
    expect(paid.webhookStatus).toBe(200)
    expect((await engineer.get(`/api/billing/statements/${id}`)).body.paymentStatus).toBe('paid')

    const audits = (await db()('audit_log').count({ n: '*' }).first())!.n
    const replay = await fetch(`${process.env.NUXT_PUBLIC_URL}/api/billing/webhook`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': paid.signature }, body: paid.payload })
    expect(replay.status).toBe(400)

    // An event for the other, open invoice, signed with a secret that is not ours.
    const openId = (await db()('statements').where({ team_id: redfernId, period_key: month(2) }).first('id')).id
    const [openInvoice] = await invoicesOf(openId)
    const payload = JSON.stringify({ id: 'evt_forged_1', object: 'event', type: 'invoice.paid', created: Math.floor(Date.now() / 1000), data: { object: { ...openInvoice, status: 'paid' } } })
    const forged = Stripe.webhooks.generateTestHeaderString({ payload, secret: 'whsec_not_the_shared_secret' })
    const res = await fetch(`${process.env.NUXT_PUBLIC_URL}/api/billing/webhook`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': forged }, body: payload })
    expect(res.status).toBe(400)
    expect((await res.json()).message).toContain('stripe-signature')
    // A signature older than the tolerance (a replay captured earlier) is refused too.
    const stale = Stripe.webhooks.generateTestHeaderString({ payload, secret: WEBHOOK_SECRET, timestamp: Math.floor(Date.now() / 1000) - 3600 })
    expect((await fetch(`${process.env.NUXT_PUBLIC_URL}/api/billing/webhook`, { method: 'POST', headers: { 'stripe-signature': stale }, body: payload })).status).toBe(400)
    expect((await engineer.get(`/api/billing/statements/${openId}`)).body.paymentStatus).toBe('open')
    expect((await db()('audit_log').count({ n: '*' }).first())!.n).toBe(audits)
    expect(await db()('payment_webhook_events').where('event_id', 'evt_forged_1').first()).toBeUndefined()
  })

  it('refuses a month that overlaps an event statement of the same team', async () => {
    // the touring round Redfern ran in the last closed month, as an event period
    const from = new Date(`${month(1)}-01T00:00:00Z`)
    const to = new Date(Date.UTC(from.getUTCFullYear(), from.getUTCMonth() + 1, 1))
    const ev = await db()('events').where('series', 'Coastline Touring Cup').where('starts_at', '>=', from).where('ends_at', '<=', to).first('id', 'name')
    const res = await engineer.post('/api/billing/statements', { teamId: redfernId, eventId: ev.id })
    expect(res.status).toBe(409)
    expect(res.body.message).toContain('eventId')
    expect(await db()('statements').where({ team_id: redfernId, period_key: `event:${ev.id}` }).first()).toBeUndefined()
  })

  it('the demo season shows every state: paid, open with an adjustment for a late session, draft', async () => {
    const rows = await engineer.get('/api/billing/statements?teamId=' + (await db()('organisations').where('name', 'Marlowe Vane Racing').first('id')).id)
    // (the browser test may have issued and paid the demo's draft by now)
    const open = rows.body.find((s: any) => s.paymentStatus === 'open')
    expect(open).toBeTruthy()
    const detail = (await engineer.get(`/api/billing/statements/${open.id}`)).body
    const adjustment = detail.lines.find((l: any) => l.kind === 'adjustment')
    const paid = rows.body.find((s: any) => s.id === adjustment.adjustsStatementId)
    expect(paid.paymentStatus).toBe('paid')
    expect(adjustment.amountMinor).toBeGreaterThan(0)
    expect(adjustment.description).toContain(`Debit on ${paid.number}`)
    expect(adjustment.evidence.sessionIds).toHaveLength(1)
  })

  it('exports the lines as CSV', async () => {
    const id = (await db()('statements').where({ team_id: redfernId, period_key: month(1) }).first('id')).id
    const res = await fetch(`${process.env.NUXT_PUBLIC_URL}/api/billing/statements/${id}/csv`, { headers: { cookie: engineer.cookie } })
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toContain('text/csv')
    const text = await res.text()
    expect(text.split(/\r?\n/)[0]).toBe('statement,period,line,kind,description,quantity,unit,unit_amount,amount,currency,tax_rate_percent,sessions,teardown,finding,adjusts_statement')
    expect(text).toContain(',fee,')
  })

  it('a team manager sees their own statements only; another team\'s answers 404', async () => {
    const marlowe = await db()('statements as s').join('organisations as o', 'o.id', 's.team_id').where('o.name', 'Marlowe Vane Racing').first('s.id')
    const own = await signIn(USERS.managerA)
    expect((await own.get(`/api/billing/statements/${marlowe.id}`)).status).toBe(200)
    const list = await own.get('/api/billing/statements')
    expect(list.body.every((s: any) => s.teamName === 'Marlowe Vane Racing')).toBe(true)
    const other = await signIn(USERS.managerB)
    expect((await other.get(`/api/billing/statements/${marlowe.id}`)).status).toBe(404)
    expect((await other.get(`/api/billing/statements/${marlowe.id}/csv`)).status).toBe(404)
    expect((await (await signIn(USERS.raceA)).get(`/api/billing/statements/${marlowe.id}`)).status).toBe(403)
  })
})

describe('the payment service down, then up', () => {
  let server: ExtraServer
  let fake: PaymentFake | undefined
  let port: number
  beforeAll(async () => {
    port = await freePort()
    server = await startServer({ NUXT_PAYMENT_PORT: String(port) })
  })
  afterAll(async () => {
    await server?.stop()
    await fake?.close()
  })

  it('queues the invoice, then delivers it once', async () => {
    // Tidewater: a team with no customer at the service yet (this fake is a fresh one).
    const tidewater = await db()('organisations').where('name', 'Tidewater Apex Motorsport').first('id')
    const id = await reviewed(month(3), tidewater.id)
    const client = new Client(server.base)
    await client.post('/api/auth/login', { email: USERS.supplierEngineer, password: 'ledger-demo-2026' })
    const queued = await client.post(`/api/billing/statements/${id}/issue`)
    expect(queued.status).toBe(200)
    expect(queued.body).toMatchObject({ state: 'issued', paymentStatus: 'queued', invoiceId: null })
    const row = await db()('invoice_outbox').where('statement_id', id).first()
    expect(row).toMatchObject({ state: 'pending', attempts: 1 })
    expect(row.last_error).toBeTruthy()

    fake = await startPaymentFake({ port, apiKey: 'sk_test_crankledger_local', webhookSecret: WEBHOOK_SECRET })
    // The retry is due after its backoff; the clock is not waited for here.
    await db()('invoice_outbox').where('statement_id', id).update({ next_attempt_at: new Date('2000-01-01T00:00:00Z') })
    const adminThere = new Client(server.base)
    await adminThere.post('/api/auth/login', { email: USERS.admin, password: 'ledger-demo-2026' })
    expect((await adminThere.post('/api/billing/deliver')).status).toBe(200)
    expect((await adminThere.post('/api/billing/deliver')).status).toBe(200)
    expect([...fake.invoices.values()].filter((i) => i.metadata.statement_id === String(id))).toHaveLength(1)
    expect((await client.get(`/api/billing/statements/${id}`)).body.paymentStatus).toBe('open')
    expect(await db()('invoice_outbox').where('statement_id', id).first()).toMatchObject({ state: 'sent', attempts: 2 })
  })
})
