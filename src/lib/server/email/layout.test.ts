import { describe, expect, it } from 'vitest';
import { renderDigest } from '../fleet/digest';
import { renderEmail } from './layout';

describe('renderEmail', () => {
	it('builds text and HTML from the same parts, escaping what it is given as text', () => {
		const mail = renderEmail({
			subject: 'Invitation',
			paragraphs: ['Ada <ada@fernhill.example> invited you to "Fernhill".'],
			action: { label: 'Accept the invitation', url: 'http://127.0.0.1:5173/invitations/a&b' },
			notes: ['Not expecting this? Ignore it.']
		});
		expect(mail.text).toBe(
			[
				'Ada <ada@fernhill.example> invited you to "Fernhill".',
				'Accept the invitation: http://127.0.0.1:5173/invitations/a&b',
				'Not expecting this? Ignore it.',
				'--',
				'Datumkeep — offsets you can trust at the machine.'
			].join('\n\n')
		);
		expect(mail.html).toContain(
			'Ada &lt;ada@fernhill.example&gt; invited you to &quot;Fernhill&quot;.'
		);
		expect(mail.html).toContain('href="http://127.0.0.1:5173/invitations/a&amp;b"');
		expect(mail.html).toContain('max-width:560px');
		expect(mail.html).not.toContain('<ada@');
	});
});

describe('the digest', () => {
	it('goes out in the same shell as every other e-mail, wider, with its lists', () => {
		const finding = {
			machineId: 7,
			machineName: 'Mill <2>',
			subject: 'H4',
			title: 'Tool length changed a lot',
			message: 'H4 moved 0.5 in',
			status: 'open' as const
		};
		const mail = renderDigest({ slug: 'fernhill', name: 'Fernhill & Sons' }, '2026-12-03', [
			{ ...finding, id: 1, severity: 'stop', isNew: true },
			{ ...finding, id: 2, severity: 'caution', isNew: false, subject: 'G54' }
		]);
		expect(mail.subject).toBe(
			'Fernhill & Sons: 2 findings to look at (1 marked Stop) — 2026-12-03'
		);
		const shell = renderEmail({ subject: '', paragraphs: [], wide: true }).html;
		const head = (html: string) => html.split('\n').slice(0, 2).join('\n');
		expect(head(mail.html)).toBe(head(shell));
		expect(mail.html.split('\n').slice(-2)).toEqual(shell.split('\n').slice(-2));
		expect(mail.html).toContain('<strong>Fernhill &amp; Sons</strong>');
		expect(mail.html).toContain('>Mill &lt;2&gt;</a></h2>');
		expect(mail.html).toContain('<strong>⛔ Stop · new</strong> — H4');
		expect(mail.html).toContain('>Open the fleet board</a>');
		expect(mail.text).toContain('Mill <2> — ');
		expect(mail.text).toContain('/shops/fernhill/findings?machine=7');
		expect(mail.text).toContain('  [⚠ Caution] G54 — Tool length changed a lot: H4 moved 0.5 in');
		expect(mail.text).toMatch(/Open the fleet board: \S+\/shops\/fernhill\/fleet/);
		expect(mail.text.endsWith('--\n\nDatumkeep — offsets you can trust at the machine.')).toBe(
			true
		);
	});
});
