import type { Knex } from 'knex'
import * as foundation from './20261202_01_foundation'
import * as fleet from './20261202_02_fleet'
import * as logger from './20261202_03_logger'
import * as alerts from './20261202_04_alerts'
import * as oil from './20261202_05_oil'
import * as teardown from './20261202_06_teardown'
import * as exactLife from './20261203_01_exact-life'
import * as eqCache from './20261203_05_eq-cache'
import * as reciprocatingMassCheck from './20261203_04_reciprocating_mass_check'
import * as oilHths from './20261203_03_a_oil_hths'
import * as oilParticleBasis from './20261203_03_b_oil_particle_basis'
import * as oilNewReference from './20261203_03_c_oil_new_reference'
import * as authSessions from './20261203_02_a_auth_sessions'
import * as signInAddresses from './20261203_02_b_sign_in_addresses'
import * as sessionFileScope from './20261203_02_c_session_file_scope'
import * as alertGroups from './20261204_01_a_alert_groups'
import * as alertGroupsFold from './20261204_01_b_alert_groups_fold'
import * as sessionVoid from './20261204_02_a_session_void'
import * as sessionLiveFile from './20261204_02_b_session_live_file'
import * as partConcessions from './20261204_03_part_concessions'
import * as traceOverview from './20261204_04_trace-overview'
import * as billingContacts from './20261204_06_a_billing_contacts'
import * as leaseContracts from './20261204_06_b_lease_contracts'
import * as statements from './20261204_06_c_statements'
import * as eventEntries from './20261205_02_a_event_entries'
import * as workshopCapacity from './20261205_02_b_workshop_capacity'
import * as findingFailureModes from './20261205_01_finding_failure_modes'
import * as readingVersions from './20261205_06_reading_versions'

// Imported statically so the built server, the CLI and the tests run the same migrations.
const migrations: Record<string, Knex.Migration> = {
  '20261202_01_foundation': foundation,
  '20261202_02_fleet': fleet,
  '20261202_03_logger': logger,
  '20261202_04_alerts': alerts,
  '20261202_05_oil': oil,
  '20261202_06_teardown': teardown,
  '20261203_01_exact-life': exactLife,
  '20261203_05_eq-cache': eqCache,
  '20261203_04_reciprocating_mass_check': reciprocatingMassCheck,
  '20261203_03_a_oil_hths': oilHths,
  '20261203_03_b_oil_particle_basis': oilParticleBasis,
  '20261203_03_c_oil_new_reference': oilNewReference,
  '20261203_02_a_auth_sessions': authSessions,
  '20261203_02_b_sign_in_addresses': signInAddresses,
  '20261203_02_c_session_file_scope': sessionFileScope,
  '20261204_01_a_alert_groups': alertGroups,
  '20261204_01_b_alert_groups_fold': alertGroupsFold,
  '20261204_02_a_session_void': sessionVoid,
  '20261204_02_b_session_live_file': sessionLiveFile,
  '20261204_03_part_concessions': partConcessions,
  '20261204_04_trace-overview': traceOverview,
  '20261204_06_a_billing_contacts': billingContacts,
  '20261204_06_b_lease_contracts': leaseContracts,
  '20261204_06_c_statements': statements,
  '20261205_02_a_event_entries': eventEntries,
  '20261205_02_b_workshop_capacity': workshopCapacity,
  '20261205_01_finding_failure_modes': findingFailureModes,
  '20261205_06_reading_versions': readingVersions,
}

export const migrationSource: Knex.MigrationSource<string> = {
  getMigrations: async () => Object.keys(migrations).sort(),
  getMigrationName: (name) => name,
  getMigration: async (name) => migrations[name]!,
}

export async function migrateLatest(knex: Knex) {
  return knex.migrate.latest({ migrationSource })
}
