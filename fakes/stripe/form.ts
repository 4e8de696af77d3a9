/**
 * Decoding of Stripe's form encoding: `line_items[0][price]=p&metadata[shop]=f&expand[0]=x`
 * becomes `{ line_items: [{ price: 'p' }], metadata: { shop: 'f' }, expand: ['x'] }`.
 * Values stay strings (Stripe's wire format has no types); the handlers convert them.
 */

/** A decoded form value. */
export type FormValue = string | FormValue[] | FormObject;
/** A decoded form object. */
export interface FormObject {
	[key: string]: FormValue;
}

/** Keys that would reach Object.prototype if used as property names. */
const UNSAFE = new Set(['__proto__', 'constructor', 'prototype']);

/** Parses an `application/x-www-form-urlencoded` body or query string into nested objects. */
export function parseForm(text: string | URLSearchParams): FormObject {
	const params = typeof text === 'string' ? new URLSearchParams(text) : text;
	const root: FormObject = {};
	for (const [key, value] of params) {
		const path = splitKey(key);
		if (path.length === 0 || path.some((p) => UNSAFE.has(p))) continue;
		let node: FormObject = root;
		for (let i = 0; i < path.length - 1; i++) {
			const next = node[path[i]];
			if (typeof next === 'object' && !Array.isArray(next)) {
				node = next;
			} else {
				const created: FormObject = {};
				node[path[i]] = created;
				node = created;
			}
		}
		const last = path[path.length - 1];
		// `expand[]=a&expand[]=b` (empty brackets) appends; the SDK uses indices, curl users often do not.
		if (last === '') {
			const index = Object.keys(node).length;
			node[String(index)] = value;
		} else {
			node[last] = value;
		}
	}
	return arrayify(root) as FormObject;
}

/** `a[b][0]` → `['a', 'b', '0']`; a key without brackets is a one-element path. */
function splitKey(key: string): string[] {
	const open = key.indexOf('[');
	if (open === -1) return [key];
	const path = [key.slice(0, open)];
	const re = /\[([^\]]*)\]/g;
	let match: RegExpExecArray | null;
	while ((match = re.exec(key.slice(open))) !== null) path.push(match[1]);
	return path;
}

/** Objects whose keys are exactly 0..n-1 were arrays on the client side. */
function arrayify(value: FormValue): FormValue {
	if (typeof value === 'string' || Array.isArray(value)) return value;
	const keys = Object.keys(value);
	for (const key of keys) value[key] = arrayify(value[key]);
	const indices = keys.map(Number).sort((a, b) => a - b);
	const sequential =
		keys.length > 0 && keys.every((k) => /^\d+$/.test(k)) && indices.every((n, i) => n === i);
	return sequential ? indices.map((n) => value[String(n)]) : value;
}

/** The string at `key`, or undefined when absent or not a string. */
export function str(form: FormObject, key: string): string | undefined {
	const value = form[key];
	return typeof value === 'string' ? value : undefined;
}

/** The nested object at `key`, or undefined. */
export function obj(form: FormObject, key: string): FormObject | undefined {
	const value = form[key];
	return typeof value === 'object' && !Array.isArray(value) ? value : undefined;
}

/** The array at `key`, or undefined. */
export function arr(form: FormObject, key: string): FormValue[] | undefined {
	const value = form[key];
	return Array.isArray(value) ? value : undefined;
}
