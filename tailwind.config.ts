import type { Config } from 'tailwindcss';

// Biasline's own identity: a deep oxide-violet band, warm paper, copper for action and focus,
// and plain, strong pass/fail/warn colours that read from across a test floor.
export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	theme: {
		extend: {
			colors: {
				oxide: {
					50: '#f3f1f8',
					100: '#e4e0f0',
					200: '#c6bedf',
					300: '#a194c7',
					400: '#7a6aaa',
					500: '#5d4d8d',
					600: '#493b73',
					700: '#3a2f5c',
					800: '#2c2447',
					900: '#211b36',
					950: '#150f24'
				},
				paper: { DEFAULT: '#f6f4ef', dim: '#ece8df', line: '#d8d2c4' },
				ink: { DEFAULT: '#1c1a22', soft: '#4a4656', faint: '#7b7686' },
				copper: { 300: '#e9b48c', 400: '#dc955f', 500: '#c8733a', 600: '#a95a27', 700: '#87461f' },
				pass: { 50: '#e8f4ec', 500: '#2e7d4f', 700: '#1f5a38' },
				fail: { 50: '#fbeae8', 500: '#b8322a', 700: '#8c231d' },
				warn: { 50: '#fcf3df', 500: '#b7800f', 700: '#7f5808' },
				signal: { 50: '#e7f0f8', 500: '#2f6ea8', 700: '#224f7a' }
			},
			fontFamily: {
				sans: ['Barlow', 'system-ui', 'sans-serif'],
				display: ['"Barlow Semi Condensed"', 'Barlow', 'system-ui', 'sans-serif'],
				mono: ['"JetBrains Mono"', 'ui-monospace', 'monospace']
			},
			fontSize: {
				figure: ['3.25rem', { lineHeight: '1', letterSpacing: '-0.01em' }]
			},
			boxShadow: {
				card: '0 1px 0 rgba(28, 26, 34, 0.04), 0 1px 3px rgba(28, 26, 34, 0.08)'
			}
		}
	}
} satisfies Config;
