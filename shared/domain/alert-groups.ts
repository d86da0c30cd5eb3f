// One alert per engine and cause: the words for an alert that lists the parts it concerns.
// Pure, shared by the life check and the migration that folded the older one-per-part alerts.

export interface GroupedPart {
  serial: string | null
  name: string | null
  position: string | null
  fraction: number | null
  governingLabel: string | null
}

export interface AlertGroupSubject {
  kind: string
  level: string
  engineSerial: string
  /** the part group ("Crank drive"), "Over-rev", the forecast's event, "Oil" */
  causeLabel: string
  /** the finding's own words, used as they are when the alert concerns no part (forecast, oil) */
  single: { title: string; message: string }
}

const LIFE_WORDS: Record<string, string> = { warning: 'warning', due: 'rebuild due', over: 'limit reached' }

export const percentText = (fraction: number) => `${Math.round(fraction * 100)} %`

const partLabel = (p: GroupedPart) => `${(p.position ?? p.name ?? 'part').toLowerCase()} ${p.serial ?? ''}`.trim()

const worst = (parts: GroupedPart[]) => parts.reduce<number | null>((w, p) => (p.fraction === null ? w : w === null ? p.fraction : Math.max(w, p.fraction)), null)

/** Most consumed first, then by position: the part that governs reads first. */
export function orderParts<T extends Pick<GroupedPart, 'fraction' | 'position'>>(parts: T[]): T[] {
  return [...parts].sort((a, b) => (b.fraction ?? -1) - (a.fraction ?? -1) || (a.position ?? '').localeCompare(b.position ?? '', 'en', { numeric: true }))
}

export function describeAlertGroup(s: AlertGroupSubject, partsIn: GroupedPart[]): { title: string; message: string } {
  const parts = orderParts(partsIn.filter((p) => p.serial !== null))
  const n = parts.length
  if (n === 0 || !(s.kind.startsWith('life-') || s.kind === 'over-rev')) return s.single
  const group = s.causeLabel.toLowerCase()
  const many = n > 1
  if (s.kind === 'over-rev') {
    return {
      title: `${s.engineSerial} over-rev – immediate inspection of ${many ? `${n} parts` : partLabel(parts[0]!)}`,
      message:
        `${s.engineSerial} has logged an over-rev in the band that demands an immediate inspection of ${many ? `${n} parts` : partLabel(parts[0]!)}: ` +
        `do not run the engine until ${many ? 'they have' : 'it has'} been inspected and signed off.`,
    }
  }
  const word = LIFE_WORDS[s.level] ?? s.level
  const w = worst(parts)
  const governing = [...new Set(parts.map((p) => p.governingLabel?.toLowerCase()).filter(Boolean))].join(', ') || 'life'
  const what = many ? `${n} parts${w === null ? '' : `, worst ${percentText(w)}`}` : `${partLabel(parts[0]!)}${w === null ? '' : ` at ${percentText(w)}`}`
  const whose = many ? `${n} parts of the ${group} group` : `${parts[0]!.name ?? 'The part'} ${parts[0]!.serial}`
  const verb = many ? 'have' : 'has'
  const action =
    s.level === 'over'
      ? `${verb} reached a life limit (${governing}): the engine must not run until ${many ? 'they are' : 'it is'} replaced or released by the supplier.`
      : s.level === 'due'
        ? `${many ? 'are' : 'is'} due for a rebuild (${governing}): plan the teardown now.`
        : `${verb} reached the warning level (${governing}): plan the rebuild.`
  return {
    title: `${s.engineSerial} ${group} – ${word}: ${what}`,
    message: `${whose} in ${s.engineSerial} ${action}`,
  }
}

/** What an alert is about: a part group's threshold, an over-rev verdict, a forecast for one event, an oil sample. */
export function alertCause(kind: string, about: { category?: string | null; event?: { eventId: number; name: string } | null }): { cause: string; label: string } {
  if (kind.startsWith('life-')) {
    const group = about.category?.trim() || 'Parts'
    return { cause: `life:${group}`, label: group }
  }
  if (kind === 'over-rev') return { cause: 'over-rev', label: 'Over-rev' }
  if (kind === 'forecast') return about.event ? { cause: `forecast:${about.event.eventId}`, label: `Forecast for ${about.event.name}` } : { cause: 'forecast', label: 'Forecast' }
  if (kind.startsWith('oil-')) return { cause: 'oil', label: 'Oil analysis' }
  return { cause: kind, label: kind }
}

/** The parts of one engine, cause and level join one open alert. */
export const alertGroupKey = (engineId: number, cause: string, level: string) => `engine:${engineId}:${cause}:${level}`.slice(0, 190)
