import type { Config } from 'tailwindcss'

/** Counterpart's own palette: warm paper, dark ink, a terracotta accent and a sea-green second. */
export default {
  content: ['./app/**/*.{vue,ts}'],
  theme: {
    extend: {
      fontFamily: { sans: ['"Source Sans 3"', 'system-ui', 'sans-serif'] },
      colors: {
        paper: { DEFAULT: '#f6f3ec', deep: '#ece6da' },
        ink: { DEFAULT: '#1e2a2f', soft: '#4a585e', faint: '#8a9499' },
        clay: { DEFAULT: '#b1502b', dark: '#8e3d1f', light: '#f3dfd3' },
        tide: { DEFAULT: '#2d6b5f', dark: '#1f4f46', light: '#d8ebe5' },
        flag: { DEFAULT: '#a3261c', light: '#f7dcd8' },
      },
    },
  },
} satisfies Config
