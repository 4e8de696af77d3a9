import type { Config } from 'tailwindcss';

/**
 * Datumkeep's look (DESIGN.md §8): light neutral ground, near-black ink and one calm accent
 * (a slate teal of our own choosing). Inter is bundled via @fontsource.
 */
export default {
	content: ['./src/**/*.{html,js,svelte,ts}'],
	theme: {
		extend: {
			fontFamily: {
				sans: ['Inter', 'ui-sans-serif', 'system-ui', 'sans-serif']
			},
			colors: {
				ink: '#16181d',
				ground: '#f6f6f4',
				accent: { DEFAULT: '#1f6f78', dark: '#17555c', light: '#e3f0f1' },
				caution: '#8a5a00',
				stop: '#a3231b',
				ok: '#2f6b2f'
			}
		}
	}
} satisfies Config;
