// A small stateful stand-in for the payment service, with exactly the endpoints Crankledger uses
// (customers: create and read; invoices, invoice items, finalize) plus a few controls for tests and the demo
// (/_fake/...: pay, void or mark an invoice overdue, which posts the signed webhook; read the state).
// Idempotency keys behave as the service documents them: the same key with the same request answers
// the first answer again; with a different request it is refused. Loopback only; memory only.
//   npx tsx scripts/payment-fake.ts   (CL_PAYMENT_PORT, NUXT_PAYMENT_API_KEY, NUXT_PAYMENT_WEBHOOK_SECRET, CL_PAYMENT_WEBHOOK_URL)
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http'
import { pathToFileURL } from 'node:url'
import Stripe from 'stripe'

export interface FakeOptions {
  port: number
  apiKey: string
  webhookSecret: string
  /** where paid / void / overdue events are posted, signed */
  webhookUrl?: string
}

interface Invoice {
  id: string
  object: 'invoice'
  customer: string
  currency: string
  status: 'draft' | 'open' | 'paid' | 'void'
  number: string | null
  due_date: number | null
  metadata: Record<string, string>
  lines: { object: 'list'; data: { id: string; amount: number; description: string }[] }
  total: number
  created: number
}

export interface PaymentFake {
  server: Server
  customers: Map<string, Record<string, unknown>>
  invoices: Map<string, Invoice>
  /** every request that reached an endpoint, including idempotent replays */
  calls: { method: string; path: string; idempotencyKey: string | null; replayed: boolean }[]
  close(): Promise<void>
}

/** Form-encoded body as the SDK sends it (`metadata[statement_id]=7`) into an object one level deep. */
function parseForm(body: string): Record<string, any> {
  const out: Record<string, any> = {}
  for (const [k, v] of new URLSearchParams(body)) {
    const m = /^(\w+)\[(\w+)\]$/.exec(k)
    if (m) (out[m[1]!] ??= {})[m[2]!] = v
    else out[k] = v
  }
  return out
}

export function startPaymentFake(opts: FakeOptions): Promise<PaymentFake> {
  const customers = new Map<string, Record<string, unknown>>()
  const invoices = new Map<string, Invoice>()
  const idempotent = new Map<string, { fingerprint: string; status: number; body: unknown }>()
  const calls: PaymentFake['calls'] = []
  let seq = 0
  const nextId = (prefix: string) => `${prefix}_fake${String(++seq).padStart(6, '0')}`
  let invoiceNumber = 0

  const send = (res: ServerResponse, status: number, body: unknown) => {
    res.writeHead(status, { 'content-type': 'application/json' })
    res.end(JSON.stringify(body))
  }
  const fail = (status: number, message: string, extra: Record<string, string> = {}) => ({ status, body: { error: { type: 'invalid_request_error', message, ...extra } } })

  async function postEvent(type: string, invoice: Invoice) {
    const event = { id: nextId('evt'), object: 'event', type, created: Math.floor(Date.now() / 1000), livemode: false, data: { object: invoice } }
    const payload = JSON.stringify(event)
    const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret: opts.webhookSecret })
    let webhookStatus: number | null = null
    if (opts.webhookUrl) {
      const res = await fetch(opts.webhookUrl, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body: payload })
      webhookStatus = res.status
    }
    return { event, payload, signature, webhookStatus }
  }

  function api(method: string, path: string, form: Record<string, any>): { status: number; body: unknown } {
    const now = Math.floor(Date.now() / 1000)
    if (method === 'POST' && path === '/v1/customers') {
      const c = { id: nextId('cus'), object: 'customer', name: form.name ?? null, email: form.email ?? null, metadata: form.metadata ?? {}, created: now }
      customers.set(c.id, c)
      return { status: 200, body: c }
    }
    if (method === 'POST' && path === '/v1/invoices') {
      if (!customers.has(form.customer)) return fail(400, `No such customer: '${form.customer}'`, { code: 'resource_missing', param: 'customer' })
      const inv: Invoice = { id: nextId('in'), object: 'invoice', customer: form.customer, currency: form.currency, status: 'draft', number: null, due_date: form.due_date ? Number(form.due_date) : null, metadata: form.metadata ?? {}, lines: { object: 'list', data: [] }, total: 0, created: now }
      invoices.set(inv.id, inv)
      return { status: 200, body: inv }
    }
    if (method === 'POST' && path === '/v1/invoiceitems') {
      const inv = invoices.get(form.invoice)
      if (!inv) return fail(400, `No such invoice: '${form.invoice}'`)
      if (inv.status !== 'draft') return fail(400, 'Invoice items can only be added to a draft invoice')
      if (!/^-?\d+$/.test(String(form.amount))) return fail(400, 'Invalid integer: amount')
      const item = { id: nextId('ii'), object: 'invoiceitem', invoice: inv.id, customer: inv.customer, amount: Number(form.amount), currency: form.currency, description: form.description ?? '' }
      inv.lines.data.push({ id: item.id, amount: item.amount, description: item.description })
      inv.total += item.amount
      return { status: 200, body: item }
    }
    const finalize = /^\/v1\/invoices\/([\w]+)\/finalize$/.exec(path)
    if (method === 'POST' && finalize) {
      const inv = invoices.get(finalize[1]!)
      if (!inv) return fail(404, `No such invoice: '${finalize[1]}'`)
      if (inv.status !== 'draft') return fail(400, 'This invoice is already finalized')
      inv.status = 'open'
      inv.number = `FAKE-${String(++invoiceNumber).padStart(4, '0')}`
      return { status: 200, body: inv }
    }
    const customer = /^\/v1\/customers\/([\w]+)$/.exec(path)
    if (method === 'GET' && customer) {
      const c = customers.get(customer[1]!)
      return c ? { status: 200, body: c } : fail(404, `No such customer: '${customer[1]}'`, { code: 'resource_missing', param: 'id' })
    }
    const get = /^\/v1\/invoices\/([\w]+)$/.exec(path)
    if (method === 'GET' && get) {
      const inv = invoices.get(get[1]!)
      return inv ? { status: 200, body: inv } : fail(404, `No such invoice: '${get[1]}'`)
    }
    return fail(404, `Unrecognized request URL (${method}: ${path})`)
  }

  async function control(method: string, path: string, res: ServerResponse) {
    if (method === 'GET' && path === '/_fake/state') return send(res, 200, { customers: [...customers.values()], invoices: [...invoices.values()], calls })
    const m = /^\/_fake\/invoices\/([\w]+)\/(pay|void|overdue)$/.exec(path)
    const inv = m ? invoices.get(m[1]!) : undefined
    if (method !== 'POST' || !m || !inv) return send(res, 404, { error: { message: 'unknown control or invoice' } })
    if (m[2] === 'pay') inv.status = 'paid'
    if (m[2] === 'void') inv.status = 'void'
    return send(res, 200, await postEvent(m[2] === 'pay' ? 'invoice.paid' : m[2] === 'void' ? 'invoice.voided' : 'invoice.overdue', inv))
  }

  async function handle(req: IncomingMessage, res: ServerResponse) {
    const chunks: Buffer[] = []
    for await (const c of req) chunks.push(c as Buffer)
    const body = Buffer.concat(chunks).toString('utf8')
    const path = (req.url ?? '/').split('?')[0]!
    const method = req.method ?? 'GET'
    if (path.startsWith('/_fake/')) return control(method, path, res)
    if (req.headers.authorization !== `Bearer ${opts.apiKey}`) return send(res, 401, { error: { type: 'invalid_request_error', message: 'Invalid API Key provided' } })
    const key = (req.headers['idempotency-key'] as string | undefined) ?? null
    const fingerprint = `${method} ${path} ${body}`
    if (key && idempotent.has(key)) {
      const first = idempotent.get(key)!
      calls.push({ method, path, idempotencyKey: key, replayed: true })
      if (first.fingerprint !== fingerprint) return send(res, 400, { error: { type: 'idempotency_error', message: 'Keys for idempotent requests can only be used with the same parameters they were first used with.' } })
      res.setHeader('idempotent-replayed', 'true')
      return send(res, first.status, first.body)
    }
    calls.push({ method, path, idempotencyKey: key, replayed: false })
    const answer = api(method, path, parseForm(body))
    if (key && method === 'POST') idempotent.set(key, { fingerprint, ...answer })
    return send(res, answer.status, answer.body)
  }

  const server = createServer((req, res) => {
    handle(req, res).catch((e) => send(res, 500, { error: { type: 'api_error', message: String(e?.message ?? e) } }))
  })
  return new Promise((resolve, reject) => {
    server.once('error', reject)
    server.listen(opts.port, '127.0.0.1', () =>
      resolve({
        server,
        customers,
        invoices,
        calls,
        close: () => new Promise<void>((r) => {
          server.closeAllConnections()
          server.close(() => r())
        }),
      }),
    )
  })
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const port = Number(process.env.CL_PAYMENT_PORT || 12111)
  startPaymentFake({
    port,
    apiKey: process.env.NUXT_PAYMENT_API_KEY || 'sk_test_crankledger_local',
    webhookSecret: process.env.NUXT_PAYMENT_WEBHOOK_SECRET || 'whsec_crankledger_local_secret',
    webhookUrl: process.env.CL_PAYMENT_WEBHOOK_URL || undefined,
  }).then(
    () => console.log(`[payment-fake] listening on 127.0.0.1:${port}`),
    (e) => {
      console.error(`[payment-fake] cannot start: ${e?.message ?? e}`)
      process.exit(1)
    },
  )
}
