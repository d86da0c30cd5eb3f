// Findings at teardown, their photos, and findings across the fleet per component type.
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import { z } from 'zod'
import type { FindingSchema, FindingUpdateSchema } from '#shared/schemas/teardown'
import type { Actor } from '../../utils/guard'
import { scopeCatalogue, scopeQuery } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict, notFound } from '../../utils/errors'
import { fileStorage } from '../../utils/file-store'
import { iso } from '../../utils/db'
import { loadComponentTypes } from '../fleet-data'
import { sniffImage } from '../image-sniff'
import { teardownFor, assertOpen, partInTeardown } from './common'
import { partHoursAt } from './wear'

export async function addFinding(trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof FindingSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const { inst, comp } = await partInTeardown(trx, td, engine, input.componentId)
  const existing = await trx('teardown_findings').where({ teardown_id: td.id, component_id: comp.id }).first('id')
  if (existing) conflict(`${comp.serial} already has finding ${existing.id} in this teardown: change that one`)
  const now = new Date()
  const [id] = await trx('teardown_findings').insert({
    teardown_id: td.id,
    component_id: comp.id,
    position: inst.position,
    condition: input.condition,
    note: input.note,
    disposition: input.disposition,
    created_by: actor.id,
    created_at: now,
  })
  await audit(trx, actor, { entity: 'teardown_finding', entityId: id!, action: 'create', after: { teardown: td.id, serial: comp.serial, condition: input.condition, disposition: input.disposition, note: input.note } })
  return { id: id!, componentId: comp.id, position: inst.position, condition: input.condition, note: input.note, disposition: input.disposition }
}

export async function updateFinding(trx: Knex.Transaction, actor: Actor, teardownId: number, findingId: number, input: z.infer<typeof FindingUpdateSchema>) {
  const { td } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  const f = await trx('teardown_findings').where({ id: findingId, teardown_id: td.id }).first()
  if (!f) notFound('Finding')
  assertOpen(td)
  const patch: Record<string, unknown> = {}
  if (input.condition !== undefined) patch.condition = input.condition
  if (input.note !== undefined) patch.note = input.note
  if (input.disposition !== undefined) patch.disposition = input.disposition
  await trx('teardown_findings').where('id', f.id).update(patch)
  await audit(trx, actor, { entity: 'teardown_finding', entityId: f.id, action: 'update', before: { condition: f.condition, note: f.note, disposition: f.disposition }, after: patch })
  return { id: f.id, componentId: f.component_id, position: f.position, condition: patch.condition ?? f.condition, note: patch.note !== undefined ? patch.note : f.note, disposition: patch.disposition ?? f.disposition }
}


export interface PhotoStore {
  setItemRaw(key: string, value: Uint8Array): Promise<void>
  removeItem(key: string): Promise<void>
}

/**
 * Stores a checked image for a finding. The bytes go into storage under a generated key inside the
 * transaction, so a failed insert leaves nothing; if the commit itself fails the file is removed.
 */
export async function addPhoto(
  db: Knex,
  store: PhotoStore,
  actor: Actor,
  teardownId: number,
  findingId: number,
  photo: { bytes: Uint8Array; type: string; width: number | null; height: number | null; name: string | null },
) {
  const key = `teardown:photos:${randomUUID()}`
  let wrote = false
  try {
    return await db.transaction(async (trx) => {
      const { td } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
      const f = await trx('teardown_findings').where({ id: findingId, teardown_id: td.id }).first()
      if (!f) notFound('Finding')
      assertOpen(td)
      const now = new Date()
      const [id] = await trx('teardown_photos').insert({
        finding_id: f.id,
        storage_key: key,
        content_type: photo.type,
        size_bytes: photo.bytes.length,
        width: photo.width,
        height: photo.height,
        thumbnail_key: null,
        original_name: photo.name ? photo.name.slice(0, 255) : null,
        uploaded_by: actor.id,
        uploaded_at: now,
      })
      await audit(trx, actor, { entity: 'teardown_photo', entityId: id!, action: 'upload', after: { finding: f.id, contentType: photo.type, size: photo.bytes.length, width: photo.width, height: photo.height } })
      wrote = true
      await store.setItemRaw(key, photo.bytes)
      return { id: id!, findingId: f.id, url: `/api/teardown-photos/${id}`, contentType: photo.type, sizeBytes: photo.bytes.length, width: photo.width, height: photo.height }
    })
  } catch (e) {
    if (wrote) await store.removeItem(key).catch(() => {})
    throw e
  }
}

/** A photo uploaded for a finding: PNG, JPEG or WebP recognised by its content (not its name), kept in the files mount. */
export async function addPhotoUpload(db: Knex, actor: Actor, teardownId: number, findingId: number, upload: { bytes: Uint8Array; name: string | null }) {
  const image = sniffImage(upload.bytes)
  if (!image) badRequest(`Invalid input: file: ${upload.name ?? 'the file'} is not a PNG, JPEG or WebP image (its content was checked, not its name)`)
  const storage = fileStorage()
  const store: PhotoStore = { setItemRaw: (k, v) => storage.setItemRaw(k, v), removeItem: (k) => storage.removeItem(k) }
  return addPhoto(db, store, actor, teardownId, findingId, { bytes: upload.bytes, type: image.type, width: image.width, height: image.height, name: upload.name })
}

/** A photo's bytes and type, for whoever may see its teardown. */
export async function photoFile(db: Knex, actor: Actor, photoId: number) {
  const photo = await photoFor(db, actor, photoId)
  const bytes = await fileStorage().getItemRaw(photo.key)
  if (!bytes) notFound('Photo')
  return { contentType: photo.contentType, bytes: bytes instanceof Uint8Array ? bytes : Buffer.from(bytes as ArrayBuffer) }
}

export async function photoFor(db: Knex, actor: Actor, photoId: number) {
  const p = await db('teardown_photos as p').join('teardown_findings as f', 'f.id', 'p.finding_id').where('p.id', photoId).first('p.*', 'f.teardown_id')
  if (!p) notFound('Photo')
  await teardownFor(db, actor, p.teardown_id).catch(() => notFound('Photo'))
  return { key: p.storage_key as string, contentType: p.content_type as string }
}

/** Findings across the fleet per component type: the evidence for adjusting a limit. */
export async function fleetFindings(db: Knex, actor: Actor) {
  const qb = db('teardown_findings as f')
    .join('teardowns as t', 't.id', 'f.teardown_id')
    .join('engines as e', 'e.id', 't.engine_id')
    .join('components as c', 'c.id', 'f.component_id')
    .select('f.*', 't.opened_at', 't.state', 'e.serial as engine_serial', 'c.serial', 'c.component_type_id')
    .orderBy('t.opened_at')
  scopeQuery(qb, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
  const rows = await qb
  const types = await loadComponentTypes(db, (q) => scopeCatalogue(q, actor))
  const hoursAt = await partHoursAt(db, [...new Set(rows.map((r) => r.component_id))])
  return types
    .map((ct) => {
      const mine = rows.filter((r) => r.component_type_id === ct.id).map((r) => ({ ...r, hours: hoursAt(r.component_id, new Date(r.opened_at)) }))
      const byCondition = new Map<string, number[]>()
      for (const r of mine) {
        let list = byCondition.get(r.condition)
        if (!list) byCondition.set(r.condition, (list = []))
        list.push(r.hours)
      }
      const dispositions: Record<string, number> = {}
      for (const r of mine) dispositions[r.disposition] = (dispositions[r.disposition] ?? 0) + 1
      return {
        componentTypeId: ct.id,
        code: ct.code,
        name: ct.name,
        limitHours: ct.limitHours,
        findings: mine.length,
        conditions: [...byCondition.entries()].map(([condition, hours]) => ({
          condition,
          count: hours.length,
          minHours: Math.min(...hours),
          maxHours: Math.max(...hours),
          meanHours: hours.reduce((a, b) => a + b, 0) / hours.length,
        })).sort((a, b) => b.count - a.count),
        dispositions,
        rows: mine.map((r) => ({ findingId: r.id, teardownId: r.teardown_id, engineSerial: r.engine_serial, serial: r.serial, condition: r.condition, disposition: r.disposition, note: r.note, hours: r.hours, at: iso(r.opened_at) })),
      }
    })
    .filter((t) => t.findings > 0)
}
