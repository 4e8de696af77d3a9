/** Errors the fake Stripe answers with, in Stripe's `{ error: { type, message, … } }` shape. */

/** Stripe error types the fake uses. */
export type StripeErrorType =
	'invalid_request_error' | 'card_error' | 'api_error' | 'idempotency_error';

/** An API error: thrown by handlers, turned into a JSON answer by the router. */
export class StripeApiError extends Error {
	constructor(
		readonly status: number,
		readonly type: StripeErrorType,
		message: string,
		readonly code?: string,
		readonly param?: string
	) {
		super(message);
	}

	/** The JSON body Stripe would send. */
	toJSON(): { error: Record<string, string> } {
		const error: Record<string, string> = { type: this.type, message: this.message };
		if (this.code) error.code = this.code;
		if (this.param) error.param = this.param;
		return { error };
	}
}

/** 404 for an id in the URL that the fake does not know. */
export function missing(kind: string, id: string): StripeApiError {
	return new StripeApiError(
		404,
		'invalid_request_error',
		`No such ${kind}: '${id}'`,
		'resource_missing',
		'id'
	);
}

/** 400 for an id given as a parameter that the fake does not know. */
export function missingParam(kind: string, id: string, param: string): StripeApiError {
	return new StripeApiError(
		400,
		'invalid_request_error',
		`No such ${kind}: '${id}'`,
		'resource_missing',
		param
	);
}

/** 400 for a bad or absent parameter. */
export function badParam(param: string, message: string): StripeApiError {
	return new StripeApiError(400, 'invalid_request_error', message, 'parameter_invalid', param);
}
