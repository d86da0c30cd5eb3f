import type { Knex } from 'knex'

// Statements, their lines with evidence, the payment service's customers, the invoice outbox and
// the webhook events already applied.
export async function up(knex: Knex) {
  await knex.schema.createTable('statements', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.enum('period_kind', ['month', 'event']).notNullable()
    // '2026-05' or 'event:12': one statement per team and period
    t.string('period_key', 40).notNullable()
    t.string('period_label', 160).notNullable()
    t.timestamp('period_from', { precision: 3 }).notNullable()
    t.timestamp('period_to', { precision: 3 }).notNullable()
    t.specificType('currency', 'CHAR(3)').notNullable()
    t.enum('state', ['draft', 'reviewed', 'issued']).notNullable().defaultTo('draft')
    t.string('number', 40).nullable().unique()
    t.bigInteger('subtotal_minor').notNullable().defaultTo(0)
    t.bigInteger('tax_minor').notNullable().defaultTo(0)
    t.bigInteger('total_minor').notNullable().defaultTo(0)
    t.integer('reviewed_by').unsigned().nullable().references('users.id')
    t.timestamp('reviewed_at', { precision: 3 }).nullable()
    t.integer('issued_by').unsigned().nullable().references('users.id')
    t.timestamp('issued_at', { precision: 3 }).nullable()
    t.timestamp('due_at', { precision: 3 }).nullable()
    // Addresses as they were when issued: an issued invoice never changes.
    t.json('parties').nullable()
    t.enum('payment_status', ['queued', 'open', 'paid', 'overdue', 'void']).nullable()
    t.string('invoice_id', 80).nullable()
    t.string('invoice_number', 80).nullable()
    t.timestamp('paid_at', { precision: 3 }).nullable()
    t.timestamp('updated_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'))
    t.unique(['team_id', 'period_key'])
    t.index(['supplier_id', 'state'])
  })

  await knex.schema.createTable('statement_lines', (t) => {
    t.increments('id')
    t.integer('statement_id').unsigned().notNullable().references('statements.id').onDelete('CASCADE')
    t.integer('sort').unsigned().notNullable()
    t.string('line_key', 120).notNullable()
    t.enum('kind', ['fee', 'usage', 'rebuild', 'over-rev', 'damage', 'adjustment']).notNullable()
    t.integer('contract_id').unsigned().nullable().references('lease_contracts.id')
    t.string('description', 500).notNullable()
    t.decimal('quantity', 14, 3).notNullable()
    t.string('unit', 20).notNullable()
    t.bigInteger('unit_amount_minor').notNullable()
    t.bigInteger('amount_minor').notNullable()
    t.integer('tax_rate_bp').unsigned().notNullable()
    t.integer('adjusts_statement_id').unsigned().nullable().references('statements.id')
    t.json('evidence').notNullable()
    t.unique(['statement_id', 'line_key'])
    t.index(['adjusts_statement_id'])
  })

  await knex.schema.createTable('billing_customers', (t) => {
    t.integer('team_id').unsigned().primary().references('organisations.id')
    t.string('customer_id', 80).notNullable()
    t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'))
  })

  // One row per issued statement (unique): two issuers cannot queue two invoices.
  await knex.schema.createTable('invoice_outbox', (t) => {
    t.bigIncrements('id')
    t.integer('statement_id').unsigned().notNullable().unique().references('statements.id')
    t.enum('state', ['pending', 'sent', 'failed']).notNullable().defaultTo('pending')
    t.integer('attempts').unsigned().notNullable().defaultTo(0)
    t.timestamp('next_attempt_at', { precision: 3 }).notNullable()
    t.string('last_error', 1000).nullable()
    t.timestamp('sent_at', { precision: 3 }).nullable()
    t.string('claimed_by', 64).nullable()
    t.timestamp('claimed_until', { precision: 3 }).nullable()
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.index(['state', 'next_attempt_at'])
  })

  await knex.schema.createTable('payment_webhook_events', (t) => {
    t.string('event_id', 120).primary()
    t.string('type', 80).notNullable()
    t.timestamp('received_at', { precision: 3 }).notNullable()
  })
}

export async function down(knex: Knex) {
  for (const table of ['payment_webhook_events', 'invoice_outbox', 'billing_customers', 'statement_lines', 'statements']) await knex.schema.dropTableIfExists(table)
}
