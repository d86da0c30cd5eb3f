// Voiding a session filed in error, and restoring it: nothing is deleted, both are audited, and life
// is recomputed (the life revision moves; the life check runs after the commit).
import type { Knex } from 'knex'
import type { RestoreSessionInput, VoidSessionInput } from '#shared/schemas/sessions'
import type { SessionDto } from '#shared/types/fleet'
import type { Actor } from '../utils/guard'
import { canSee } from '../utils/guard'
import { audit } from '../utils/audit'
import { conflict, notFound } from '../utils/errors'
import { iso } from '../utils/db'
import { announceLifeChanged } from '../utils/life-events'
import { bumpLifeRevision, toSessionDto } from './fleet-data'
import { sessionById } from './sessions'

/** The session row locked for the change, or 404 when the actor may not see it. */
async function lockedSession(trx: Knex.Transaction, actor: Actor, id: number) {
  const row = await trx('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('s.id', id).forUpdate().first('s.*', 'e.supplier_id', 'e.serial as engine_serial')
  if (!row || !canSee(actor, { supplierId: row.supplier_id, teamId: row.team_id })) notFound('Session')
  return row
}

const summary = (row: any) => ({ engineSerial: row.engine_serial, kind: row.kind, startedAt: iso(row.started_at), runningSeconds: Number(row.running_seconds), source: row.source })

export async function voidSession(db: Knex, actor: Actor, id: number, input: VoidSessionInput): Promise<SessionDto> {
  const session = await db.transaction(async (trx) => {
    const row = await lockedSession(trx, actor, id)
    if (row.voided_at) conflict(`Session ${id} was already voided on ${iso(row.voided_at)!.slice(0, 10)}: restore it first to void it again`)
    await trx('sessions').where('id', id).update({ voided_at: new Date(), voided_by: actor.id, void_reason: input.reason })
    await audit(trx, actor, { entity: 'session', entityId: id, action: 'void', before: { ...summary(row), voided: false }, after: { voided: true, reason: input.reason } })
    await bumpLifeRevision(trx)
    return toSessionDto(await sessionById(trx, id))
  })
  announceLifeChanged()
  return session
}

export async function restoreSession(db: Knex, actor: Actor, id: number, input: RestoreSessionInput): Promise<SessionDto> {
  const session = await db.transaction(async (trx) => {
    const row = await lockedSession(trx, actor, id)
    if (!row.voided_at) conflict(`Session ${id} is not voided`)
    if (row.file_sha256) {
      // The same file may have been imported again after the void; both cannot count.
      // Same owner scope as this session, so a twin is one the actor may see.
      const twin = await trx('sessions as s').where('s.file_scope_id', row.file_scope_id).where('s.file_sha256', row.file_sha256).whereNull('s.voided_at').first('s.id')
      if (twin) conflict(`Session ${id} cannot be restored: the same logger file counts as session ${twin.id}; void that one first`, { sessionId: twin.id })
    }
    await trx('sessions').where('id', id).update({ voided_at: null, voided_by: null, void_reason: null })
    await audit(trx, actor, {
      entity: 'session',
      entityId: id,
      action: 'restore',
      before: { voided: true, voidedAt: iso(row.voided_at), reason: row.void_reason },
      after: { ...summary(row), voided: false, ...(input.reason ? { reason: input.reason } : {}) },
    })
    await bumpLifeRevision(trx)
    return toSessionDto(await sessionById(trx, id))
  })
  announceLifeChanged()
  return session
}
