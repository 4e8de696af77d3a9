/**
 * HTML pages the fake serves in place of Stripe's hosted ones: checkout, billing portal and
 * invoice. Plain forms with a look of our own, and every page says it is a local test stand-in
 * so nobody mistakes it for a real payment page.
 */
import { CARD_DECLINED, CARD_OK, completeCheckout, period, updateSubscription } from './billing';
import { StripeApiError } from './errors';
import { str, type FormObject } from './form';
import type { StripeState } from './state';
import type { Invoice, Price, Product, StripeEvent, Subscription } from './types';
import { escapeHtml as e } from '../lib/http';

/** What the server should answer. */
export type PageResult = { status: number; html: string } | { redirect: string };

/** What page handlers need. */
export interface PageContext {
	state: StripeState;
	/** Delivers events and waits for each first attempt, so the app is up to date before the redirect. */
	deliver(events: StripeEvent[]): Promise<void>;
}

/** Handles `/checkout/…`, `/portal/…` and `/invoices/…`; null when the path is none of them. */
export async function handlePage(
	ctx: PageContext,
	method: string,
	path: string,
	form: FormObject,
	query: URLSearchParams
): Promise<PageResult | null> {
	let match = /^\/checkout\/([A-Za-z0-9_]+)$/.exec(path);
	if (match) return checkout(ctx, method, match[1], form);
	match = /^\/portal\/([A-Za-z0-9_]+)(?:\/(switch|cancel|resume))?$/.exec(path);
	if (match) return portal(ctx, method, match[1], match[2], form, query);
	match = /^\/invoices\/([A-Za-z0-9_]+)$/.exec(path);
	if (match && method === 'GET') return invoicePage(ctx.state, match[1]);
	return null;
}

// ---- checkout ----

async function checkout(
	ctx: PageContext,
	method: string,
	id: string,
	form: FormObject
): Promise<PageResult> {
	const { state } = ctx;
	const session = state.sessions.get(id);
	const extras = state.sessionExtras.get(id);
	if (!session || !extras)
		return notFound(
			'This checkout link is unknown to the local fake Stripe (it forgets everything on restart).'
		);
	if (method === 'POST' && session.status === 'open') {
		const result = completeCheckout(state, id, str(form, 'card_number') ?? '', str(form, 'email'));
		if (result.ok) {
			await ctx.deliver(result.events);
			return { redirect: result.redirectTo };
		}
		// 402 like Stripe's card errors; a browser shows the page all the same.
		return { status: 402, html: checkoutHtml(state, id, result.message) };
	}
	return { status: 200, html: checkoutHtml(state, id, null) };
}

function checkoutHtml(state: StripeState, id: string, error: string | null): string {
	const session = state.sessions.get(id)!;
	const extras = state.sessionExtras.get(id)!;
	if (session.status === 'complete') {
		const next = session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id);
		return layout(
			'Checkout complete',
			`<p>This checkout is already complete.</p><p><a href="${e(next)}">Continue</a></p>`
		);
	}
	if (session.status === 'expired') {
		return layout(
			'Checkout expired',
			'<p>This checkout has expired. Start again from the app.</p>'
		);
	}
	const rows = extras.lines
		.map((line) => {
			const price = state.prices.get(line.price)!;
			return `<tr><td>${e(productName(state, price))}${line.quantity > 1 ? ` × ${line.quantity}` : ''}</td><td class="num">${e(money(price.unit_amount * line.quantity, price.currency))} per ${e(price.recurring.interval)}</td></tr>`;
		})
		.join('');
	const trialEnd =
		extras.trialEnd ?? (extras.trialDays ? state.now() + extras.trialDays * 86_400 : null);
	const trial = trialEnd
		? `<p class="note">Trial until ${e(new Date(trialEnd * 1000).toISOString().slice(0, 10))}: nothing is charged today; ${e(money(session.amount_subtotal, session.currency))} is charged then.</p>`
		: `<p class="note">Due today: ${e(money(session.amount_total, session.currency))}.</p>`;
	const needsEmail = !session.customer && !session.customer_email;
	const body = `
<table class="summary"><tbody>${rows}</tbody></table>
${trial}
${error ? `<p class="error" role="alert">${e(error)}</p>` : ''}
<form method="post" action="/checkout/${e(id)}">
	${needsEmail ? '<label>E-mail<input name="email" type="email" autocomplete="off" required></label>' : ''}
	<label>Card number<input name="card_number" inputmode="numeric" autocomplete="off" placeholder="4242 4242 4242 4242" required></label>
	<div class="pair">
		<label>Expiry<input name="expiry" autocomplete="off" placeholder="MM/YY"></label>
		<label>CVC<input name="cvc" autocomplete="off" placeholder="123"></label>
	</div>
	<button type="submit">${trialEnd ? 'Start trial' : 'Subscribe'}</button>
</form>
<p class="hint">Test cards: <code>${spaced(CARD_OK)}</code> pays, <code>${spaced(CARD_DECLINED)}</code> is declined. Expiry and CVC are not checked.</p>
${session.cancel_url ? `<p><a href="${e(session.cancel_url)}">Cancel and return to the app</a></p>` : ''}`;
	return layout('Test checkout', body);
}

// ---- billing portal ----

async function portal(
	ctx: PageContext,
	method: string,
	id: string,
	action: string | undefined,
	form: FormObject,
	query: URLSearchParams
): Promise<PageResult> {
	const { state } = ctx;
	const session = state.portalSessions.get(id);
	if (!session)
		return notFound(
			'This billing portal link is unknown to the local fake Stripe (it forgets everything on restart).'
		);
	if (method === 'POST' && action) {
		const sub = state.subscriptions.get(str(form, 'subscription') ?? '');
		if (!sub || sub.customer !== session.customer)
			return notFound('That subscription does not belong to this customer.');
		try {
			const events =
				action === 'switch'
					? updateSubscription(state, sub, { price: str(form, 'price') ?? '' })
					: updateSubscription(state, sub, { cancelAtPeriodEnd: action === 'cancel' });
			await ctx.deliver(events);
		} catch (err) {
			if (err instanceof StripeApiError)
				return { status: 400, html: portalHtml(state, id, err.message) };
			throw err;
		}
		return { redirect: `/portal/${id}?done=${action}` };
	}
	const done = query.get('done');
	const notice =
		done === 'switch'
			? 'Plan switched.'
			: done === 'cancel'
				? 'The subscription will end at the end of the current period.'
				: done === 'resume'
					? 'The subscription will continue.'
					: null;
	return { status: 200, html: portalHtml(state, id, null, notice) };
}

function portalHtml(
	state: StripeState,
	id: string,
	error: string | null,
	notice: string | null = null
): string {
	const session = state.portalSessions.get(id)!;
	const customer = state.customers.get(session.customer);
	const subs = [...state.subscriptions.values()].filter(
		(sub) => sub.customer === session.customer && sub.status !== 'canceled'
	);
	const invoices = [...state.invoices.values()]
		.filter((inv) => inv.customer === session.customer)
		.reverse();
	const body = `
<p>Billing for <strong>${e(customer?.name ?? customer?.email ?? session.customer)}</strong>.</p>
${notice ? `<p class="ok" role="status">${e(notice)}</p>` : ''}
${error ? `<p class="error" role="alert">${e(error)}</p>` : ''}
${subs.length ? subs.map((sub) => subscriptionBlock(state, id, sub)).join('') : '<p>No current subscription.</p>'}
<h2>Invoices</h2>
${invoices.length ? invoiceTable(invoices) : '<p>No invoices yet.</p>'}
${session.return_url ? `<p><a href="${e(session.return_url)}">Return to the app</a></p>` : ''}`;
	return layout('Test billing portal', body);
}

function subscriptionBlock(state: StripeState, portalId: string, sub: Subscription): string {
	const current = sub.items.data[0].price;
	const { end } = period(sub);
	const choices = [...state.prices.values()]
		.filter((price) => price.id !== current.id && price.active)
		.map(
			(price, i) =>
				`<label class="choice"><input type="radio" name="price" value="${e(price.id)}"${i === 0 ? ' checked' : ''}> ${e(productName(state, price))} — ${e(money(price.unit_amount, price.currency))} per ${e(price.recurring.interval)}</label>`
		)
		.join('');
	const hidden = `<input type="hidden" name="subscription" value="${e(sub.id)}">`;
	const status = sub.cancel_at_period_end
		? `ends on ${date(end)}`
		: sub.status === 'trialing' && sub.trial_end
			? `trial until ${date(sub.trial_end)}`
			: `${sub.status}, renews on ${date(end)}`;
	return `
<section class="sub" data-subscription="${e(sub.id)}">
	<h2>${e(productName(state, current))}</h2>
	<p>${e(money(current.unit_amount, current.currency))} per ${e(current.recurring.interval)} · <span class="status">${e(status)}</span></p>
	${choices ? `<form method="post" action="/portal/${e(portalId)}/switch">${hidden}<fieldset><legend>Switch to</legend>${choices}</fieldset><button type="submit">Switch plan</button></form>` : ''}
	${
		sub.cancel_at_period_end
			? `<form method="post" action="/portal/${e(portalId)}/resume">${hidden}<button type="submit">Keep the subscription</button></form>`
			: `<form method="post" action="/portal/${e(portalId)}/cancel">${hidden}<button type="submit" class="secondary">Cancel at end of period</button></form>`
	}
</section>`;
}

// ---- invoices ----

function invoicePage(state: StripeState, id: string): PageResult {
	const invoice = state.invoices.get(id);
	if (!invoice) return notFound('This invoice is unknown to the local fake Stripe.');
	const lines = invoice.lines.data
		.map(
			(line) =>
				`<tr><td>${e(line.description)}</td><td class="num">${e(money(line.amount, line.currency))}</td></tr>`
		)
		.join('');
	const body = `
<p>Invoice <strong>${e(invoice.number)}</strong>, ${e(date(invoice.created))}, <span class="status">${e(invoice.status)}</span></p>
<p>Period ${e(date(invoice.period_start))} to ${e(date(invoice.period_end))}</p>
<table class="summary"><tbody>${lines}<tr><th>Total</th><th class="num">${e(money(invoice.total, invoice.currency))}</th></tr></tbody></table>`;
	return { status: 200, html: layout('Test invoice', body) };
}

function invoiceTable(invoices: Invoice[]): string {
	const rows = invoices
		.map(
			(inv) =>
				`<tr><td><a href="/invoices/${e(inv.id)}">${e(inv.number)}</a></td><td>${e(date(inv.created))}</td><td class="num">${e(money(inv.total, inv.currency))}</td><td>${e(inv.status)}</td></tr>`
		)
		.join('');
	return `<table class="summary"><thead><tr><th>Number</th><th>Date</th><th class="num">Amount</th><th>Status</th></tr></thead><tbody>${rows}</tbody></table>`;
}

// ---- shared ----

function notFound(message: string): PageResult {
	return { status: 404, html: layout('Not found', `<p>${e(message)}</p>`) };
}

function productName(state: StripeState, price: Price): string {
	const product =
		typeof price.product === 'string'
			? state.products.get(price.product)
			: (price.product as Product);
	return product?.name ?? price.nickname ?? price.id;
}

function money(amount: number, currency: string): string {
	return new Intl.NumberFormat('en-US', {
		style: 'currency',
		currency: currency.toUpperCase()
	}).format(amount / 100);
}

function date(unix: number): string {
	return new Date(unix * 1000).toISOString().slice(0, 10);
}

function spaced(card: string): string {
	return card.replace(/(\d{4})(?=\d)/g, '$1 ');
}

function layout(title: string, body: string): string {
	return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${e(title)} · local stand-in</title>
<style>
	body { font: 16px/1.5 system-ui, sans-serif; margin: 0; background: #f3f1ec; color: #222; }
	.banner { background: #3b3b3b; color: #ffd866; padding: 0.5rem 1rem; font-size: 0.9rem; }
	main { max-width: 34rem; margin: 2rem auto; background: #fff; border: 1px solid #cfc9bd; padding: 1.5rem 2rem; }
	h1 { font-size: 1.4rem; margin-top: 0; }
	h2 { font-size: 1.1rem; }
	label { display: block; margin: 0.75rem 0; font-weight: 600; }
	label.choice { font-weight: normal; margin: 0.3rem 0; }
	input:not([type=radio]) { display: block; width: 100%; box-sizing: border-box; padding: 0.5rem; font: inherit; border: 1px solid #999; }
	.pair { display: flex; gap: 1rem; }
	.pair label { flex: 1; }
	button { font: inherit; padding: 0.5rem 1.2rem; background: #2d5d3b; color: #fff; border: 0; cursor: pointer; margin: 0.5rem 0; }
	button.secondary { background: #777; }
	fieldset { border: 1px solid #ddd; }
	.summary { width: 100%; border-collapse: collapse; margin: 1rem 0; }
	.summary td, .summary th { border-bottom: 1px solid #e4e0d8; padding: 0.4rem 0; text-align: left; }
	.num { text-align: right !important; }
	.error { background: #fbe3e1; border-left: 4px solid #b3261e; padding: 0.5rem 0.75rem; }
	.ok { background: #e3f4e6; border-left: 4px solid #2d5d3b; padding: 0.5rem 0.75rem; }
	.note, .hint { color: #555; font-size: 0.9rem; }
</style>
</head>
<body>
<div class="banner">Local test stand-in for Stripe, served by Datumkeep's fake. No real card is charged and nothing leaves this machine.</div>
<main>
<h1>${e(title)}</h1>
${body}
</main>
</body>
</html>`;
}
