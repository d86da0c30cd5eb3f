import type { Knex } from 'knex'

export async function up(knex: Knex) {
  await knex.schema.createTable('engine_types', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.string('code', 40).notNullable().unique()
    t.string('name', 120).notNullable()
    // Which calendar the engines of this type run (events carry the same series name).
    t.string('series', 80).notNullable()
    t.integer('cylinders').unsigned().notNullable()
    t.string('layout', 40).notNullable()
    t.decimal('bore_mm', 8, 3).notNullable()
    t.decimal('stroke_mm', 8, 3).notNullable()
    t.decimal('conrod_mm', 8, 3).notNullable()
    t.decimal('reciprocating_mass_kg', 8, 4).nullable()
    t.integer('rev_limit_rpm').unsigned().notNullable()
    t.integer('idle_rpm').unsigned().notNullable()
    t.integer('band_width_rpm').unsigned().notNullable()
    t.integer('reference_rpm').unsigned().notNullable()
    t.decimal('max_gap_s', 8, 3).notNullable().defaultTo(1)
    t.json('over_rev_bands').notNullable()
    t.json('low_oil_pressure').notNullable()
    t.timestamp('created_at').notNullable().defaultTo(knex.fn.now())
    t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now())
  })

  await knex.schema.createTable('component_types', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.string('code', 40).notNullable().unique()
    t.string('name', 120).notNullable()
    t.string('category', 40).notNullable()
    t.decimal('limit_hours', 10, 3).nullable()
    t.decimal('limit_km', 12, 3).nullable()
    t.decimal('limit_eq_hours', 10, 3).nullable()
    t.json('limit_over_rev').notNullable()
    t.string('immediate_inspection_band', 20).nullable()
    t.decimal('warning_level', 5, 4).notNullable().defaultTo(0.8)
    t.decimal('due_level', 5, 4).notNullable().defaultTo(0.9)
    t.decimal('damage_exponent', 6, 3).notNullable().defaultTo(0)
    t.json('characteristics').notNullable()
    t.timestamp('created_at').notNullable().defaultTo(knex.fn.now())
    t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now())
  })

  await knex.schema.createTable('engine_type_positions', (t) => {
    t.increments('id')
    t.integer('engine_type_id').unsigned().notNullable().references('engine_types.id').onDelete('CASCADE')
    t.string('position', 40).notNullable()
    t.string('label', 80).notNullable()
    t.integer('component_type_id').unsigned().notNullable().references('component_types.id')
    t.integer('sort').unsigned().notNullable().defaultTo(0)
    t.unique(['engine_type_id', 'position'])
  })

  await knex.schema.createTable('components', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('component_type_id').unsigned().notNullable().references('component_types.id')
    t.string('serial', 60).notNullable().unique()
    t.string('batch', 60).nullable()
    t.enum('status', ['serviceable', 'installed', 'quarantined', 'scrapped']).notNullable().defaultTo('serviceable')
    t.timestamp('born_at').notNullable().defaultTo(knex.fn.now())
    t.string('notes', 500).nullable()
    // Over-revs before this moment no longer demand an immediate inspection (it was done and signed off).
    t.timestamp('inspection_cleared_at', { precision: 3 }).nullable()
    t.index(['component_type_id', 'status'])
  })

  await knex.schema.createTable('engines', (t) => {
    t.increments('id')
    t.string('serial', 60).notNullable().unique()
    t.integer('engine_type_id').unsigned().notNullable().references('engine_types.id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('team_id').unsigned().nullable().references('organisations.id')
    t.enum('status', ['active', 'teardown', 'retired']).notNullable().defaultTo('active')
    t.enum('location', ['car', 'shelf', 'supplier', 'teardown']).notNullable().defaultTo('shelf')
    t.string('chassis', 40).nullable()
    t.timestamp('built_at').notNullable().defaultTo(knex.fn.now())
    t.timestamp('rebuilt_at').nullable()
    t.index(['team_id'])
    t.index(['supplier_id'])
  })

  await knex.schema.createTable('installations', (t) => {
    t.increments('id')
    t.integer('component_id').unsigned().notNullable().references('components.id')
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.string('position', 40).notNullable()
    t.timestamp('from_at', { precision: 3 }).notNullable()
    t.timestamp('to_at', { precision: 3 }).nullable()
    t.integer('created_by').unsigned().nullable().references('users.id')
    t.index(['engine_id', 'from_at'])
    t.index(['component_id', 'from_at'])
  })
  // The database itself refuses a part open in two places or two parts open in one position:
  // a persistent column that is 1 while open and NULL once closed, unique with the key.
  await knex.raw('ALTER TABLE installations ADD COLUMN open_flag TINYINT AS (IF(to_at IS NULL, 1, NULL)) PERSISTENT')
  await knex.raw('CREATE UNIQUE INDEX installations_component_open ON installations (component_id, open_flag)')
  await knex.raw('CREATE UNIQUE INDEX installations_position_open ON installations (engine_id, position, open_flag)')

  await knex.schema.createTable('events', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.string('name', 120).notNullable()
    t.string('series', 80).notNullable()
    t.string('track', 120).notNullable()
    t.decimal('track_length_km', 8, 3).notNullable()
    t.timestamp('starts_at').notNullable()
    t.timestamp('ends_at').notNullable()
    // Typical running per engine over the event (all sessions), used when an engine has no own plan.
    t.integer('planned_seconds').unsigned().nullable()
    t.decimal('planned_km', 10, 3).nullable()
    t.index(['starts_at'])
  })

  // An engine assigned to a car for an event, with its own planned running.
  await knex.schema.createTable('event_plans', (t) => {
    t.increments('id')
    t.integer('event_id').unsigned().notNullable().references('events.id').onDelete('CASCADE')
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.string('chassis', 40).nullable()
    t.integer('planned_seconds').unsigned().nullable()
    t.decimal('planned_km', 10, 3).nullable()
    t.unique(['event_id', 'engine_id'])
    t.index(['engine_id'])
  })

  await knex.schema.createTable('sessions', (t) => {
    t.increments('id')
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.integer('team_id').unsigned().nullable().references('organisations.id')
    t.integer('event_id').unsigned().nullable().references('events.id')
    t.enum('kind', ['practice', 'qualifying', 'race', 'test', 'bench']).notNullable()
    t.timestamp('started_at', { precision: 3 }).notNullable()
    t.decimal('running_seconds', 12, 3).notNullable()
    t.decimal('distance_km', 12, 3).notNullable().defaultTo(0)
    t.integer('band_width_rpm').unsigned().notNullable()
    t.json('histogram').notNullable()
    t.json('over_revs').notNullable()
    t.json('low_oil_pressure').notNullable()
    t.integer('max_rpm').unsigned().nullable()
    t.decimal('max_oil_temp_c', 6, 2).nullable()
    t.decimal('max_water_temp_c', 6, 2).nullable()
    t.decimal('max_speed_kmh', 7, 2).nullable()
    t.decimal('min_oil_pressure_bar', 6, 3).nullable()
    t.enum('source', ['manual', 'logger']).notNullable()
    t.string('file_key', 120).nullable()
    t.string('file_name', 255).nullable()
    t.string('file_sha256', 64).nullable().unique()
    t.json('details').nullable()
    t.integer('created_by').unsigned().nullable().references('users.id')
    t.timestamp('created_at').notNullable().defaultTo(knex.fn.now())
    t.index(['engine_id', 'started_at'])
    t.index(['team_id', 'started_at'])
  })

  // One row whose number changes with every write that moves life (sessions, builds, limits),
  // so that every app instance can tell whether its cached fleet life is still current.
  await knex.schema.createTable('life_revision', (t) => {
    t.tinyint('id').primary()
    t.bigInteger('revision').unsigned().notNullable()
  })
  await knex('life_revision').insert({ id: 1, revision: 1 })
}

export async function down(knex: Knex) {
  for (const table of ['life_revision', 'sessions', 'event_plans', 'events', 'installations', 'engines', 'components', 'engine_type_positions', 'component_types', 'engine_types']) {
    await knex.schema.dropTableIfExists(table)
  }
}
