import type { LimitPreviewDto, LimitTargetKind } from '#shared/types/limit-preview'

/** Saves a previewed change and refreshes what it moved: `saveLimits` of useComponentTypes or useEngineTypes. */
export type SaveLimits = (id: number, change: Record<string, unknown>, previewToken: string) => Promise<unknown>

/**
 * A limit change previewed, then saved as previewed. The preview writes nothing; a save answers 409
 * when the fleet data moved since the preview, and the preview is then taken again on today's data.
 */
export function useLimitPreview(saveLimits: SaveLimits) {
  const base = (kind: LimitTargetKind, id: number) => `/api/${kind}s/${id}`
  const preview = ref<LimitPreviewDto | null>(null)
  const change = ref<Record<string, unknown> | null>(null)
  const pending = ref(false)
  const error = ref('')
  /** set when a save found the data moved and the preview was taken again */
  const refreshedNotice = ref('')

  async function open(kind: LimitTargetKind, id: number, body: Record<string, unknown>) {
    pending.value = true
    error.value = ''
    refreshedNotice.value = ''
    change.value = body
    try {
      preview.value = await $fetch<LimitPreviewDto>(`${base(kind, id)}/preview`, { method: 'POST', body })
    } catch (e) {
      preview.value = null
      throw e
    } finally {
      pending.value = false
    }
  }

  /** Saves what is previewed; true when saved. On 409 the preview is refreshed and the user told. */
  async function save(): Promise<boolean> {
    const p = preview.value
    if (!p || !change.value) return false
    pending.value = true
    error.value = ''
    try {
      await saveLimits(p.target.id, change.value, p.previewToken)
      close()
      return true
    } catch (e: any) {
      if (e?.statusCode === 409 || e?.response?.status === 409) {
        const message = apiMessage(e, 'The fleet data changed since this preview')
        try {
          preview.value = await $fetch<LimitPreviewDto>(`${base(p.target.kind, p.target.id)}/preview`, { method: 'POST', body: change.value })
          refreshedNotice.value = `${message.replace(/[.:;]?$/, '.')} The preview below is on the data as it is now.`
        } catch (again) {
          error.value = apiMessage(again, 'The preview could not be taken again')
        }
      } else {
        error.value = apiMessage(e, 'The change could not be saved')
      }
      return false
    } finally {
      pending.value = false
    }
  }

  function close() {
    preview.value = null
    change.value = null
    error.value = ''
    refreshedNotice.value = ''
  }

  return { preview, pending, error, refreshedNotice, open, save, close }
}

export type LimitPreviewController = ReturnType<typeof useLimitPreview>
