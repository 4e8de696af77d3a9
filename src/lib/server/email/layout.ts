/** Every e-mail has a plain-text and an HTML part; this builds both from the same paragraphs. */
export interface EmailContent {
	subject: string;
	paragraphs: string[];
	action?: { label: string; url: string };
	footer?: string;
}

const escape = (s: string) =>
	s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

export function renderEmail(c: EmailContent): { subject: string; text: string; html: string } {
	const footer = c.footer ?? 'Datumkeep — offsets you can trust at the machine.';
	const text = [
		...c.paragraphs,
		...(c.action ? [`${c.action.label}: ${c.action.url}`] : []),
		'--',
		footer
	].join('\n\n');
	const html = `<!doctype html><html><body style="font-family:Inter,Arial,sans-serif;color:#16181d;background:#f6f6f4;padding:24px">
<div style="max-width:560px;margin:auto;background:#fff;border:1px solid #e7e5e4;border-radius:8px;padding:24px">
${c.paragraphs.map((p) => `<p style="line-height:1.5">${escape(p)}</p>`).join('\n')}
${c.action ? `<p><a href="${escape(c.action.url)}" style="display:inline-block;background:#1f6f78;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">${escape(c.action.label)}</a></p><p style="font-size:12px;color:#57534e">Or paste this address into your browser: ${escape(c.action.url)}</p>` : ''}
<p style="font-size:12px;color:#57534e">${escape(footer)}</p>
</div></body></html>`;
	return { subject: c.subject, text, html };
}
