import { defineStore } from 'pinia'
import type { LifeStatus } from '#shared/domain/life'

export type BoardSort = 'consumed' | 'due' | 'serial'
export type BoardLocation = 'car' | 'shelf' | 'supplier' | 'teardown'

export interface BoardFilters {
  team: string
  type: string
  status: LifeStatus | ''
  location: BoardLocation | ''
  q: string
  sort: BoardSort
}

const EMPTY: BoardFilters = { team: '', type: '', status: '', location: '', q: '', sort: 'consumed' }
const STATUSES = ['ok', 'warning', 'due', 'over'] as const
const LOCATIONS = ['car', 'shelf', 'supplier', 'teardown'] as const
const SORTS = ['consumed', 'due', 'serial'] as const

function pick<T extends string>(v: unknown, allowed: readonly T[]): T | '' {
  return typeof v === 'string' && (allowed as readonly string[]).includes(v) ? (v as T) : ''
}

// The URL is the source of truth so a view can be shared; the store remembers the last view between pages.
export const useBoardStore = defineStore('board', () => {
  const filters = ref<BoardFilters>({ ...EMPTY })

  function fromQuery(query: Record<string, unknown>): BoardFilters {
    const one = (k: string) => (Array.isArray(query[k]) ? query[k][0] : query[k])
    return {
      team: /^\d+$/.test(String(one('team') ?? '')) ? String(one('team')) : '',
      type: /^\d+$/.test(String(one('type') ?? '')) ? String(one('type')) : '',
      status: pick(one('status'), STATUSES),
      location: pick(one('location'), LOCATIONS),
      q: typeof one('q') === 'string' ? String(one('q')).slice(0, 60) : '',
      sort: pick(one('sort'), SORTS) || 'consumed',
    }
  }

  /** Only the set fields, so shared links stay short. */
  function toQuery(f: BoardFilters): Record<string, string> {
    const q: Record<string, string> = {}
    for (const [k, v] of Object.entries(f)) if (v !== '' && !(k === 'sort' && v === 'consumed')) q[k] = v
    return q
  }

  const isFiltered = computed(() => Boolean(filters.value.team || filters.value.type || filters.value.status || filters.value.location || filters.value.q))

  return { filters, fromQuery, toQuery, isFiltered, empty: () => ({ ...EMPTY }) }
})
