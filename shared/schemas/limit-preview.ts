// A limit change as it is previewed and then saved: only the figures life is computed from.
import { z } from 'zod'
import { line } from '../text'
import { componentTypeLifeFields, OverRevBandSchema } from './fleet'

export const ComponentTypeLimitChangeSchema = z
  .object(componentTypeLifeFields)
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')
  .refine((v) => v.warningLevel === undefined || v.dueLevel === undefined || v.warningLevel < v.dueLevel, { message: 'must be above the warning level', path: ['dueLevel'] })

export const EngineTypeLimitChangeSchema = z
  .object({
    referenceRpm: z.number().int().min(1000).max(25000),
    overRevBands: z.array(OverRevBandSchema).min(1).max(6),
  })
  .partial()
  .strict()
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')
  .refine((v) => !v.overRevBands || new Set(v.overRevBands.map((b) => b.id)).size === v.overRevBands.length, { message: 'band ids must be unique', path: ['overRevBands'] })

/** The token the preview answered with: saving is refused (409) when the data it saw has moved. */
const previewToken = line().min(20).max(8000)

export const ComponentTypeLimitSaveSchema = z.object({ change: ComponentTypeLimitChangeSchema, previewToken })
export const EngineTypeLimitSaveSchema = z.object({ change: EngineTypeLimitChangeSchema, previewToken })

export type ComponentTypeLimitChange = z.infer<typeof ComponentTypeLimitChangeSchema>
export type EngineTypeLimitChange = z.infer<typeof EngineTypeLimitChangeSchema>
