import type { Knex } from 'knex'

// Stored oil limits held the new oil's KV100 alone (newOilKv100). They now hold a new-oil
// reference (grade, KV40, KV100, TBN) and a KV40 change limit; data only, no DDL.
type Stored = Record<string, unknown>

function parse(v: unknown): Stored | null {
  if (typeof v === 'string') {
    try {
      const parsed = JSON.parse(v)
      return parsed && typeof parsed === 'object' ? parsed : null
    } catch {
      return null
    }
  }
  return v && typeof v === 'object' ? (v as Stored) : null
}

async function rewrite(knex: Knex, change: (limits: Stored) => Stored) {
  await knex.transaction(async (trx) => {
    const rows = await trx('oil_limits').select('engine_type_id', 'limits').forUpdate()
    for (const row of rows) {
      const limits = parse(row.limits)
      if (!limits) continue
      await trx('oil_limits').where('engine_type_id', row.engine_type_id).update({ limits: JSON.stringify(change(limits)) })
    }
  })
}

/** A stored limits value as the new shape: newOilKv100 becomes newOil.kv100; the KV40 limit takes its common-practice 25 %. */
export function upgradeLimits({ newOilKv100, ...rest }: Stored): Stored {
  return {
    ...rest,
    kv40ChangeCautionPct: 'kv40ChangeCautionPct' in rest ? rest.kv40ChangeCautionPct : 25,
    newOil: 'newOil' in rest ? rest.newOil : typeof newOilKv100 === 'number' ? { grade: null, kv40: null, kv100: newOilKv100, tbn: null } : null,
  }
}

/** Back to the old shape: only the new oil's KV100 survives. */
export function downgradeLimits({ newOil, kv40ChangeCautionPct: _kv40, ...rest }: Stored): Stored {
  const kv100 = newOil && typeof newOil === 'object' ? (newOil as Stored).kv100 : null
  return { ...rest, newOilKv100: typeof kv100 === 'number' ? kv100 : null }
}

export async function up(knex: Knex) {
  await rewrite(knex, upgradeLimits)
}

export async function down(knex: Knex) {
  await rewrite(knex, downgradeLimits)
}
