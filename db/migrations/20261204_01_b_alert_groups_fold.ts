import type { Knex } from 'knex'
import { alertCause, alertGroupKey, describeAlertGroup } from '../../shared/domain/alert-groups'
import { iso, json } from '../values'

// Folds the one-per-part alerts into one alert per engine and cause: the alerts one check run
// made for the same engine, cause and level (and the same acknowledged or open state) become one,
// listing its parts; acknowledgements, recipients and sent mails follow the alert that stays.
// Not undone by down(): the parts stay listed under the alert that kept them.
export async function up(knex: Knex) {
  await knex.transaction(async (trx) => {
    const rows = await trx('alerts as a')
      .leftJoin('components as c', 'c.id', 'a.component_id')
      .leftJoin('component_types as ct', 'ct.id', 'c.component_type_id')
      // only alerts from before: those that list no part yet (so running it again changes nothing)
      .whereNotExists(trx('alert_parts').whereRaw('alert_parts.alert_id = a.id'))
      .select('a.*', 'ct.category as category')
      .orderBy('a.id')
    const acked = new Set((await trx('alert_acks').distinct('alert_id')).map((r: any) => Number(r.alert_id)))
    const folds = new Map<string, any[]>()
    for (const r of rows) {
      const details = json<any>(r.details, {})
      const { cause, label } = alertCause(r.kind, { category: r.category, event: details.event ?? null })
      const group = alertGroupKey(r.engine_id, cause, r.level)
      const run = r.task_run_id ?? `at${iso(r.created_at)}`
      const key = `${group}|${run}|${acked.has(Number(r.id)) ? 'acked' : 'open'}`
      folds.set(key, [...(folds.get(key) ?? []), { ...r, details, cause, label, group }])
      await trx('alert_parts').insert({
        alert_id: r.id,
        item_key: r.alert_key,
        component_id: r.component_id,
        details: JSON.stringify(details),
        task_run_id: r.task_run_id,
        created_at: r.created_at,
      })
    }
    for (const members of folds.values()) {
      const [keep, ...rest] = members
      const restIds = rest.map((m) => m.id)
      if (restIds.length) {
        await trx('alert_parts').whereIn('alert_id', restIds).update({ alert_id: keep.id })
        await trx('mail_outbox').whereIn('alert_id', restIds).update({ alert_id: keep.id })
        for (const table of ['alert_acks', 'alert_recipients']) {
          const have = new Set((await trx(table).where('alert_id', keep.id).pluck('user_id')).map(Number))
          for (const row of await trx(table).whereIn('alert_id', restIds).orderBy('id')) {
            if (have.has(Number(row.user_id))) continue
            have.add(Number(row.user_id))
            await trx(table).where('id', row.id).update({ alert_id: keep.id })
          }
          await trx(table).whereIn('alert_id', restIds).delete()
        }
        await trx('alerts').whereIn('id', restIds).delete()
      }
      const parts = members.map((m) => m.details)
      const words = describeAlertGroup(
        { kind: keep.kind, level: keep.level, engineSerial: keep.details.engineSerial ?? '', causeLabel: keep.label, single: { title: keep.title, message: keep.details.message ?? '' } },
        parts.map((d: any) => ({ serial: d.partSerial ?? null, name: d.partName ?? null, position: d.position ?? null, fraction: d.fraction ?? null, governingLabel: d.governing?.label ?? null })),
      )
      await trx('alerts')
        .where('id', keep.id)
        .update({
          cause: keep.cause.slice(0, 80),
          cause_label: keep.label.slice(0, 120),
          group_key: keep.group,
          component_id: members.length > 1 ? null : keep.component_id,
          title: words.title.slice(0, 300),
          details: JSON.stringify({ ...keep.details, message: words.message }),
          updated_at: members.reduce((t, m) => (m.created_at > t ? m.created_at : t), keep.created_at),
        })
    }
  })
}

export async function down() {}
