// Oil caution and critical as findings of the life check, keyed like the life findings so that
// each sample's status alerts once. Handed to the check by the scheduler plugin.
import type { Knex } from 'knex'
import type { EngineDetailDto } from '#shared/types/fleet'
import { oilStatusByEngine } from './oil'

export async function oilFindings({ db, life }: { db: Knex; life: { engines: EngineDetailDto[] } }) {
  const oil = await oilStatusByEngine(db)
  const findings = []
  for (const engine of life.engines) {
    const o = oil.get(engine.id)
    if (!o || o.status === 'normal' || engine.status !== 'active') continue
    const reason = o.reasons[0]?.message ?? `oil ${o.status}`
    findings.push({
      key: `engine:${engine.id}:oil:${o.status}:${o.sampleId}`,
      kind: o.status === 'critical' ? ('oil-critical' as const) : ('oil-caution' as const),
      level: o.status,
      engineId: engine.id,
      componentId: null,
      title: `${engine.serial} oil ${o.status} – ${reason}`,
      details: {
        engineSerial: engine.serial,
        engineTypeCode: engine.engineTypeCode,
        teamName: engine.teamName,
        partSerial: null,
        partName: null,
        position: null,
        status: o.status,
        fraction: null,
        governing: null,
        event: null,
        message: `Oil sample ${o.sampleId} (${o.sampledAt.slice(0, 10)}): ${o.reasons.map((r) => r.message).join('; ')}.`,
      },
    })
  }
  return findings
}
