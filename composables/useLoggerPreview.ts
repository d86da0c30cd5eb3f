import { LOGGER_CHANNELS, LOGGER_DELIMITERS, detectDecimal, detectTimeUnit, guessMapping, guessUnits, headerSignature, type LoggerMapping } from '#shared/domain/logger-mapping'
import { detectLayout, preambleEntries, preambleStart, unitsFromRow, type DetectedLayout } from '#shared/domain/logger-layout'
import type { LoggerProfile } from '~/composables/useLoggerImport'

/** Bytes read in the browser for the preview: enough for a long preamble and the first rows. */
const PREVIEW_BYTES = 256 * 1024

export interface InspectedFile {
  layout: DetectedLayout
  delimiter: string
  previewRows: string[][]
  /** the logger's own start of recording, from the metadata lines, as an ISO date-time */
  loggerStart: string | null
  profile: LoggerProfile | null
}

/** The layout found with each delimiter; the one with the most channel names wins. */
function bestLayout(lines: string[]): { layout: DetectedLayout; delimiter: string } | null {
  let best: { layout: DetectedLayout; delimiter: string } | null = null
  for (const d of LOGGER_DELIMITERS) {
    const layout = detectLayout(lines, d)
    if (layout && (!best || layout.header.length > best.layout.header.length)) best = { layout, delimiter: d }
  }
  return best
}

/**
 * Reads the first lines of a file: its layout, first rows, the logger's start and the saved
 * profile whose channel names it has (whatever its metadata lines say). Throws with a message
 * for the engineer when nothing can be found.
 */
export async function inspectLoggerFile(f: File, profiles: LoggerProfile[]): Promise<InspectedFile> {
  const text = await f.slice(0, PREVIEW_BYTES).text()
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/)
  if (f.size > PREVIEW_BYTES) lines.pop() // cut off mid-line
  const found = bestLayout(lines.slice(0, 400))
  if (!found) throw new Error(lines.some((l) => l.trim() !== '') ? 'No line of channel names followed by rows of numbers was found in the first lines of the file.' : 'The file is empty.')
  const { layout, delimiter } = found
  return {
    layout,
    delimiter,
    previewRows: lines.slice(layout.firstDataLine - 1, layout.firstDataLine + 11).filter((l) => l.trim() !== '').map((l) => l.split(delimiter)),
    loggerStart: preambleStart(preambleEntries(layout.preamble, delimiter)),
    profile: profiles.find((p) => p.headerSignature === headerSignature(layout.header)) ?? null,
  }
}

/** A profile's mapping with this file's own layout (the profile may have been saved from a file with other metadata lines). */
export function profileMappingFor(profile: LoggerProfile, inspected: InspectedFile): LoggerMapping {
  const m = JSON.parse(JSON.stringify(profile.mapping)) as LoggerMapping
  const { layout } = inspected
  m.delimiter = inspected.delimiter as LoggerMapping['delimiter']
  m.layout = { headerLine: layout.headerLine, unitsRow: layout.unitsRow, unitsFromRow: layout.unitsRow && (profile.mapping.layout?.unitsFromRow ?? false) }
  return m
}

/**
 * The first lines of a logger file read in the browser: metadata lines, the line of channel
 * names and an optional units row, delimiter, decimal separator and a column mapping, taken
 * from a saved profile with the same channel names (whatever the metadata lines say) or
 * guessed from the names. The engineer confirms or changes all of it before the upload.
 */
export function useLoggerPreview(profiles: Ref<LoggerProfile[]>) {
  const file = ref<File | null>(null)
  const header = ref<string[]>([])
  const previewRows = ref<string[][]>([])
  const delimiter = ref('')
  const preamble = ref<string[]>([])
  const unitCells = ref<string[] | null>(null)
  /** the logger's own start of recording, from the metadata lines, as an ISO date-time */
  const loggerStart = ref<string | null>(null)
  const mapping = reactive<LoggerMapping>({
    columns: { time: '', rpm: '' },
    units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
    decimal: '.',
  })
  const matchedProfile = ref<LoggerProfile | null>(null)
  const profileName = ref('')
  const error = ref('')

  async function readPreview(f: File) {
    error.value = ''
    file.value = f
    let inspected: InspectedFile
    try {
      inspected = await inspectLoggerFile(f, profiles.value)
    } catch (e) {
      error.value = (e as Error).message
      header.value = []
      previewRows.value = []
      return
    }
    const { layout, profile } = inspected
    delimiter.value = inspected.delimiter
    header.value = layout.header
    preamble.value = layout.preamble
    unitCells.value = layout.units
    loggerStart.value = inspected.loggerStart
    previewRows.value = inspected.previewRows
    matchedProfile.value = profile
    if (profile) {
      Object.assign(mapping, profileMappingFor(profile, inspected))
      profileName.value = profile.name
    } else {
      const guess = guessMapping(header.value)
      mapping.columns = { time: guess.time ?? '', rpm: guess.rpm ?? '', ...guess }
      mapping.units = { ...mapping.units, ...guessUnits(header.value) }
      const timeIdx = header.value.indexOf(mapping.columns.time)
      if (timeIdx >= 0) mapping.units.time = detectTimeUnit(previewRows.value.map((r) => r[timeIdx] ?? ''))
      mapping.delimiter = inspected.delimiter as LoggerMapping['delimiter']
      mapping.layout = { headerLine: layout.headerLine, unitsRow: layout.unitsRow, unitsFromRow: layout.unitsRow && unitsReadable() }
      if (mapping.layout.unitsFromRow) mapping.units = unitsInRow()
    }
    mapping.decimal = detectDecimal(previewRows.value, delimiter.value)
    // every select shows a choice, "Not in this file" included (blanks are dropped on upload)
    for (const ch of LOGGER_CHANNELS) mapping.columns[ch] ??= ''
  }

  function unitCellsOfMapped() {
    const at = (name?: string) => {
      const i = name ? header.value.indexOf(name) : -1
      return i >= 0 ? unitCells.value?.[i] ?? '' : undefined
    }
    const c = mapping.columns
    return { time: at(c.time), speed: at(c.speed), oilTemp: at(c.oilTemp), waterTemp: at(c.waterTemp), oilPressure: at(c.oilPressure) }
  }
  /** true when every mapped channel's unit cell names a unit that can be read (or is blank) */
  function unitsReadable() {
    return unitsFromRow(mapping.units, unitCellsOfMapped()).unknown === null
  }
  function unitsInRow() {
    return unitsFromRow(mapping.units, unitCellsOfMapped()).units
  }

  function cleanMapping(): LoggerMapping {
    const columns = Object.fromEntries(Object.entries(mapping.columns).filter(([, v]) => v)) as LoggerMapping['columns']
    return { ...mapping, columns }
  }

  return { file, header, previewRows, delimiter, preamble, unitCells, loggerStart, mapping, matchedProfile, profileName, error, readPreview, cleanMapping, unitsInRow }
}
