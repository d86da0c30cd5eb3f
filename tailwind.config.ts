import type { Config } from 'tailwindcss'

// Colours are CSS variables so the dark (garage) and light (print/daylight) themes share one palette.
const v = (name: string) => `rgb(var(--${name}) / <alpha-value>)`

export default {
  darkMode: 'class',
  content: [
    './components/**/*.{vue,ts}',
    './layouts/**/*.vue',
    './pages/**/*.vue',
    './app.vue',
    './plugins/**/*.ts',
    './shared/**/*.ts',
  ],
  theme: {
    extend: {
      fontFamily: {
        sans: ['Barlow', 'system-ui', 'sans-serif'],
        mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'Consolas', 'monospace'],
      },
      colors: {
        ink: v('ink'),
        muted: v('muted'),
        paper: v('paper'),
        panel: v('panel'),
        rule: v('rule'),
        accent: v('accent'),
        'accent-ink': v('accent-ink'),
        ok: v('ok'),
        warn: v('warn'),
        due: v('due'),
        over: v('over'),
      },
    },
  },
  plugins: [],
} satisfies Config
