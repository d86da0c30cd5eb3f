import Papa from 'papaparse'
import { LOGGER_CHANNELS, detectDecimal, detectTimeUnit, guessMapping, guessUnits, headerSignature, type LoggerMapping } from '#shared/domain/logger-mapping'
import type { LoggerProfile } from '~/composables/useLoggerImport'

/**
 * The first rows of a logger file read in the browser: delimiter, decimal separator and a column mapping,
 * taken from a saved profile with the same header or guessed from the column names.
 */
export function useLoggerPreview(profiles: Ref<LoggerProfile[]>) {
  const file = ref<File | null>(null)
  const header = ref<string[]>([])
  const previewRows = ref<string[][]>([])
  const delimiter = ref('')
  const mapping = reactive<LoggerMapping>({
    columns: { time: '', rpm: '' },
    units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
    decimal: '.',
  })
  const matchedProfile = ref<LoggerProfile | null>(null)
  const profileName = ref('')
  const error = ref('')

  function readPreview(f: File) {
    error.value = ''
    file.value = f
    Papa.parse<string[]>(f, {
      preview: 12,
      skipEmptyLines: true,
      complete(result) {
        const rows = result.data as string[][]
        if (rows.length < 2) {
          error.value = rows.length === 0 ? 'The file is empty.' : 'The file has a header but no data rows.'
          header.value = rows[0] ?? []
          previewRows.value = []
          return
        }
        delimiter.value = result.meta.delimiter
        header.value = rows[0]!.map((h) => h.replace(/^\uFEFF/, '').trim())
        previewRows.value = rows.slice(1)
        const signature = headerSignature(header.value)
        const profile = profiles.value.find((p) => p.headerSignature === signature) ?? null
        matchedProfile.value = profile
        if (profile) {
          Object.assign(mapping, JSON.parse(JSON.stringify(profile.mapping)))
          profileName.value = profile.name
        } else {
          const guess = guessMapping(header.value)
          mapping.columns = { time: guess.time ?? '', rpm: guess.rpm ?? '', ...guess }
          mapping.units = { ...mapping.units, ...guessUnits(header.value) }
          const timeIdx = header.value.indexOf(mapping.columns.time)
          if (timeIdx >= 0) mapping.units.time = detectTimeUnit(previewRows.value.map((r) => r[timeIdx] ?? ''))
        }
        // every select shows a choice, "Not in this file" included (blanks are dropped on upload)
        for (const ch of LOGGER_CHANNELS) mapping.columns[ch] ??= ''
        mapping.decimal = detectDecimal(previewRows.value, delimiter.value)
        mapping.delimiter = (['\t', ',', ';', '|'].includes(delimiter.value) ? delimiter.value : undefined) as LoggerMapping['delimiter']
      },
      error(e) {
        error.value = `The file could not be read: ${e.message}`
      },
    })
  }

  function cleanMapping(): LoggerMapping {
    const columns = Object.fromEntries(Object.entries(mapping.columns).filter(([, v]) => v)) as LoggerMapping['columns']
    return { ...mapping, columns }
  }

  return { file, header, previewRows, delimiter, mapping, matchedProfile, profileName, error, readPreview, cleanMapping }
}
