/** Reading a Stripe event's object without trusting its shape: every field may be missing. */
export type Obj = Record<string, unknown>;

export const isObj = (v: unknown): v is Obj =>
	typeof v === 'object' && v !== null && !Array.isArray(v);
export const str = (o: Obj | undefined, k: string): string | undefined =>
	o && typeof o[k] === 'string' ? (o[k] as string) : undefined;
export const num = (o: Obj | undefined, k: string): number | undefined =>
	o && typeof o[k] === 'number' ? (o[k] as number) : undefined;
export const obj = (o: Obj | undefined, k: string): Obj | undefined =>
	o && isObj(o[k]) ? (o[k] as Obj) : undefined;
/** An id field that may be expanded into an object. */
export const idOf = (o: Obj | undefined, k: string): string | undefined =>
	str(o, k) ?? str(obj(o, k), 'id');
export const toDate = (unix: number | undefined) =>
	unix === undefined ? null : new Date(unix * 1000);

/** The subscription an invoice belongs to (newer API versions nest it under `parent`). */
export function invoiceSubscription(o: Obj): string | undefined {
	return (
		idOf(obj(obj(o, 'parent'), 'subscription_details'), 'subscription') ?? idOf(o, 'subscription')
	);
}
