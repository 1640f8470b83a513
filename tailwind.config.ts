import type { Config } from 'tailwindcss'

// Kitwright's palette: a deep teal "ink" for structure, copper for the one action that matters,
// a warm paper background for long sessions under hall lighting, and clear signal colours.
export default {
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      fontFamily: { sans: ['Roboto', 'system-ui', 'sans-serif'], mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'monospace'] },
      colors: {
        ink: { 50: '#eef4f7', 100: '#d6e4eb', 200: '#aec9d6', 300: '#7fa7ba', 400: '#46728a', 500: '#33657e', 600: '#264f64', 700: '#1f3b4d', 800: '#172d3b', 900: '#0f1e28' },
        copper: { 50: '#fcf3ec', 100: '#f8e1cf', 200: '#f0c19c', 300: '#e59a63', 400: '#d87c3c', 500: '#c46a2b', 600: '#a65522', 700: '#84421d', 800: '#63321a', 900: '#432212' },
        paper: '#f7f5f0',
        ok: { 50: '#ecf7f0', 500: '#2f7d4f', 600: '#256640', 700: '#1b4d30' },
        bad: { 50: '#fdeeed', 500: '#b3261e', 600: '#921f18', 700: '#6f1712' },
        warn: { 50: '#fdf6e3', 500: '#a86b00', 600: '#8a5800' },
      },
      fontSize: { 'scan': ['2rem', { lineHeight: '2.5rem', fontWeight: '700' }] },
      minHeight: { tap: '3rem' },
      minWidth: { tap: '3rem' },
    },
  },
} satisfies Config
