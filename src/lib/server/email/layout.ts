import { escapeHtml } from '$lib/html';

/**
 * A part of an e-mail: plain text (escaped here), or an HTML element the caller built with
 * escapeHtml together with the same content as text.
 */
export type EmailPart = string | { html: string; text: string };

/** Every e-mail has a plain-text and an HTML part; the layout builds both from the same parts. */
export interface EmailContent {
	subject: string;
	paragraphs: EmailPart[];
	action?: { label: string; url: string };
	/** Small print under the action (why you get this, how to stop it). */
	notes?: EmailPart[];
	footer?: string;
	/** A wider card for e-mails with lists (the digest). */
	wide?: boolean;
}

const SMALL = 'font-size:12px;color:#57534e';

const textOf = (p: EmailPart) => (typeof p === 'string' ? p : p.text);
const htmlOf = (p: EmailPart, style: string) =>
	typeof p === 'string' ? `<p style="${style}">${escapeHtml(p)}</p>` : p.html;

/** The one shell every e-mail goes out in: card, paragraphs, button, small print, footer. */
export function renderEmail(c: EmailContent): { subject: string; text: string; html: string } {
	const footer = c.footer ?? 'Datumkeep — offsets you can trust at the machine.';
	const notes = c.notes ?? [];
	const text = [
		...c.paragraphs.map(textOf),
		...(c.action ? [`${c.action.label}: ${c.action.url}`] : []),
		...notes.map(textOf),
		'--',
		footer
	].join('\n\n');
	const action = c.action
		? `<p style="margin-top:20px"><a href="${escapeHtml(c.action.url)}" style="display:inline-block;background:#1f6f78;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">${escapeHtml(c.action.label)}</a></p><p style="${SMALL}">Or paste this address into your browser: ${escapeHtml(c.action.url)}</p>`
		: '';
	const html = `<!doctype html><html><body style="font-family:Inter,Arial,sans-serif;color:#16181d;background:#f6f6f4;padding:24px">
<div style="max-width:${c.wide ? 640 : 560}px;margin:auto;background:#fff;border:1px solid #e7e5e4;border-radius:8px;padding:24px">
${c.paragraphs.map((p) => htmlOf(p, 'line-height:1.5')).join('\n')}
${action}
${notes.map((p) => htmlOf(p, SMALL)).join('\n')}
<p style="${SMALL}">${escapeHtml(footer)}</p>
</div></body></html>`;
	return { subject: c.subject, text, html };
}
