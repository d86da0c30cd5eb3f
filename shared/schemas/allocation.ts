// Schemas of the engine allocation: a team's entries per event, the workshop's weekly capacity, a plan to accept.
import { z } from 'zod'
import { line } from '../text'

const id = z.number().int().positive()
const teamId = z.number().int().positive().optional()

export const AllocationQuerySchema = z.object({ teamId: z.coerce.number().int().positive().optional() })

export const AllocationSolveSchema = z.object({ teamId })

export const AllocationAcceptSchema = z.object({
  teamId,
  assignments: z.array(z.object({ entryId: id, engineId: id })).max(500),
  rebuilds: z.array(z.object({ engineId: id, beforeEventId: id })).max(500),
})

export const EntrySchema = z.object({
  chassis: line().trim().min(1, 'must name the car').max(40),
  // An event's running for one car: at least a minute, at most two days.
  plannedSeconds: z.number().int().min(60, 'must be at least a minute').max(48 * 3600, 'must be at most 48 h'),
})

export const EventEntriesSchema = z
  .object({ teamId, eventId: id, entries: z.array(EntrySchema).max(12, 'at most 12 cars per event') })
  .refine((v) => new Set(v.entries.map((e) => e.chassis.toUpperCase())).size === v.entries.length, { message: 'each car is entered once', path: ['entries'] })

const WEEK = /^\d{4}-\d{2}-\d{2}$/
export const WorkshopWeekSchema = z.object({
  weekStart: line()
    .regex(WEEK, 'must be a date YYYY-MM-DD')
    .refine((v) => !Number.isNaN(Date.parse(`${v}T00:00:00Z`)) && new Date(`${v}T00:00:00Z`).getUTCDay() === 1, 'must be a Monday'),
  rebuilds: z.number().int().min(0).max(50),
})
