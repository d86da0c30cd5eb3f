// An engine of the demo's V8 type made for one alert test and removed after it, so that no other
// test file's engines, alerts or counts move. Written to the database directly (there is no route
// that builds an engine); every removal bumps the life revision.
import { BASE, db, type Client } from './helpers'

const DAY = 86_400_000

export async function makeAlertEngine(serial: string, teamName = 'Marlowe Vane Racing'): Promise<number> {
  const template = await db()('engines').where('serial', 'KV8-1103').first()
  const team = await db()('organisations').where('name', teamName).first()
  const builtAt = new Date(Date.now() - 5 * DAY)
  const [engineId] = await db()('engines').insert({
    serial, engine_type_id: template.engine_type_id, supplier_id: template.supplier_id, team_id: team.id, status: 'active', location: 'shelf', chassis: null, built_at: builtAt,
  })
  // Every position of the engine type, whatever other files have swapped or removed on the template engine.
  const build = await db()('engine_type_positions').where('engine_type_id', template.engine_type_id).orderBy('sort').select('position', 'component_type_id')
  for (const p of build) {
    const [componentId] = await db()('components').insert({ supplier_id: template.supplier_id, component_type_id: p.component_type_id, serial: `${serial}-${p.position}`.toUpperCase(), batch: 'T-ALERT', status: 'installed', born_at: builtAt })
    await db()('installations').insert({ component_id: componentId, engine_id: engineId, position: p.position, from_at: builtAt })
  }
  await db()('life_revision').where('id', 1).increment('revision', 1)
  return Number(engineId)
}

export async function removeAlertEngine(engineId: number | undefined) {
  if (!engineId) return
  const alertIds = await db()('alerts').where('engine_id', engineId).pluck('id')
  if (alertIds.length) {
    await db()('mail_outbox').whereIn('alert_id', alertIds).update({ alert_id: null })
    await db()('alerts').whereIn('id', alertIds).delete() // parts, notices, acks and recipients go with them
  }
  const components = await db()('installations').where('engine_id', engineId).pluck('component_id')
  await db()('sessions').where('engine_id', engineId).delete()
  await db()('installations').where('engine_id', engineId).delete()
  if (components.length) await db()('components').whereIn('id', components).delete()
  await db()('engines').where('id', engineId).delete()
  await db()('life_revision').where('id', 1).increment('revision', 1)
}

/** 100 Hz at 8,000 rpm with three 0.3 s excursions to 10,000 rpm: three events in the demo V8's teardown band (from 9,900 rpm). */
export function threeOverRevs(): string {
  const lines = ['time_s,engine_rpm']
  let i = 0
  const add = (rpm: number, seconds: number) => {
    for (let k = 0; k < Math.round(seconds * 100); k++, i++) lines.push(`${(i / 100).toFixed(2)},${rpm}`)
  }
  add(8000, 60)
  for (let n = 0; n < 3; n++) {
    add(10000, 0.3)
    add(8000, 10)
  }
  add(1000, 1)
  return `${lines.join('\n')}\n`
}

const MAPPING = { columns: { time: 'time_s', rpm: 'engine_rpm' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }

/** One logger import through the API, as a race engineer's upload. */
export async function importTrace(client: Client, engineId: number, csv: string, fileName: string) {
  const q = new URLSearchParams({ engineId: String(engineId), kind: 'test', startedAt: new Date(Date.now() - 3600_000).toISOString(), fileName, mapping: JSON.stringify(MAPPING) })
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: client.cookie, 'content-type': 'text/csv', origin: BASE }, body: csv })
  return { status: res.status, body: await res.json() }
}

export const MAIL_WEB = `http://127.0.0.1:${process.env.CL_MAILDEV_WEB || 1082}`
export interface Mail { subject: string; to: { address: string }[]; text: string; html: string }
export const inbox = async (web = MAIL_WEB): Promise<Mail[]> => (await fetch(`${web}/api/email`)).json()
export const clearInbox = async (web = MAIL_WEB) => {
  await fetch(`${web}/api/email/all`, { method: 'DELETE' })
}
export const addressesOf = (mails: Mail[]) => mails.flatMap((m) => m.to.map((t) => t.address.toLowerCase())).sort()
export const to = (mails: Mail[], address: string) => mails.filter((m) => m.to.some((t) => t.address.toLowerCase() === address))
export const isDigest = (m: Mail) => m.subject.startsWith('[Crankledger] Alert digest: ')
export const isDoNotRun = (m: Mail) => m.subject.startsWith('[Crankledger] DO NOT RUN: ')

/** The people an alert about this engine should reach by e-mail: supplier engineers and the running team's managers. */
export async function expectedRecipients(engineId: number): Promise<string[]> {
  const e = await db()('engines').where('id', engineId).first()
  const rows = await db()('users')
    .where('active', true)
    .where((q) => q.where({ organisation_id: e.supplier_id, role: 'supplier_engineer' }).orWhere({ organisation_id: e.team_id, role: 'team_manager' }))
    .select('email')
  return rows.map((r: any) => r.email.toLowerCase()).sort()
}
