// ApexCharts paints SVG attributes, which cannot read CSS variables: resolve the theme's colours once on the client.
export function themeColor(name: string, fallback = '#e8913a'): string {
  if (typeof window === 'undefined') return fallback
  const v = getComputedStyle(document.documentElement).getPropertyValue(`--${name}`).trim()
  return v ? `rgb(${v.split(/\s+/).join(',')})` : fallback
}
