import type { ApexOptions } from 'apexcharts'

// apexcharts writes colours into SVG attributes, where CSS variables do not resolve; read the theme's values instead.
function cssRgb(name: string, fallback: string): string {
  if (!import.meta.client) return fallback
  const v = getComputedStyle(document.documentElement).getPropertyValue(`--${name}`).trim()
  return v ? `rgb(${v.split(/\s+/).join(',')})` : fallback
}

export function useChartTheme() {
  const theme = useCookie<'dark' | 'light'>('cl-theme', { default: () => 'dark' })
  const tick = ref(0)
  watch(theme, () => nextTick(() => tick.value++))

  const colors = computed(() => {
    void tick.value
    const light = theme.value === 'light'
    return {
      ink: cssRgb('ink', '#ece6da'),
      muted: cssRgb('muted', '#a8a399'),
      rule: cssRgb('rule', '#42454a'),
      accent: cssRgb('accent', '#e8913a'),
      warn: cssRgb('warn', '#e2be4c'),
      due: cssRgb('due', '#ee8e4a'),
      over: cssRgb('over', '#f0625c'),
      // One distinct hue per series; the first is the accent.
      series: light
        ? [cssRgb('accent', '#a6520a'), '#1f5f9e', '#17736a', '#6a3fa0', '#6b5a2e', '#8a1f4a']
        : [cssRgb('accent', '#e8913a'), '#7fb2e5', '#6cc7b9', '#b99be0', '#d4c58f', '#e58fb3'],
    }
  })

  /** Options every chart shares: no toolbar, no animation, theme text colours, thin grid. */
  const base = computed<ApexOptions>(() => ({
    chart: { toolbar: { show: false }, zoom: { enabled: false }, animations: { enabled: false }, background: 'transparent', fontFamily: 'Barlow, system-ui, sans-serif', foreColor: colors.value.muted },
    theme: { mode: theme.value === 'light' ? 'light' : 'dark' },
    grid: { borderColor: colors.value.rule, strokeDashArray: 0 },
    legend: { labels: { colors: colors.value.ink }, fontSize: '12px' },
    tooltip: { theme: theme.value === 'light' ? 'light' : 'dark' },
    dataLabels: { enabled: false },
    fill: { type: 'solid' },
  }))

  return { colors, base }
}
