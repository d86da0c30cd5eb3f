// A teardown finding charged to the team by the supplier: who may, what a bad request gets, and the
// teardown's own read showing it. Uses a demo finding without a charge; the charge is removed at the end.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, db, signIn, USERS } from './helpers'

let engineer: Client
let finding: { id: number; teardown_id: number; team_id: number | null }

beforeAll(async () => {
  engineer = await signIn(USERS.supplierEngineer)
  finding = await db()('teardown_findings as f')
    .join('teardowns as td', 'td.id', 'f.teardown_id')
    .join('engines as e', 'e.id', 'td.engine_id')
    .leftJoin('finding_charges as c', 'c.finding_id', 'f.id')
    .whereNull('c.id')
    .whereNotNull('e.team_id')
    .orderBy('f.id')
    .first('f.id', 'f.teardown_id', 'e.team_id')
  expect(finding).toBeTruthy()
})
afterAll(async () => {
  await db()('finding_charges').where('finding_id', finding.id).delete()
})

describe('charging a teardown finding to the team', () => {
  it('refuses a team\'s own manager and a request without a reason, then records one charge and shows it on the teardown', async () => {
    const url = `/api/billing/findings/${finding.id}/charge`
    const manager = await signIn(USERS.managerA)
    expect([403, 404]).toContain((await manager.post(url, { reason: 'not mine to decide' })).status)

    const noReason = await engineer.post(url, { reason: '  ' })
    expect(noReason.status).toBe(400)
    expect(noReason.body.message).toMatch(/reason/)
    expect(await db()('finding_charges').where('finding_id', finding.id).first()).toBeUndefined()

    const charged = await engineer.post(url, { reason: 'Damage from running with low oil pressure' })
    expect(charged.status).toBe(200)
    const again = await engineer.post(url, { reason: 'twice' })
    expect(again.status).toBe(409)
    expect(Number((await db()('finding_charges').where('finding_id', finding.id).count({ n: '*' }).first())!.n)).toBe(1)

    const detail = await engineer.get(`/api/teardowns/${finding.teardown_id}`)
    const shown = detail.body.findings.find((f: any) => f.id === finding.id)
    expect(shown.charge.reason).toBe('Damage from running with low oil pressure')
    expect(shown.charge.markedByName).toBeTruthy()
    expect(Date.parse(shown.charge.markedAt)).toBeGreaterThan(Date.now() - 60_000)
    const audit = await db()('audit_log').where({ entity: 'teardown_finding', entity_id: finding.id, action: 'charge-to-team' }).first()
    expect(audit).toBeTruthy()
  })
})
