// Types for the part of autocannon 9.0.0 the fleet bench uses (the package ships none).
declare module 'autocannon' {
	import type { EventEmitter } from 'node:events';

	interface Options {
		url: string;
		connections?: number;
		duration?: number;
		headers?: Record<string, string>;
	}

	interface Result {
		requests: { average: number; total: number };
		latency: { p50: number; p97_5: number; p99: number; max: number };
		non2xx: number;
		errors: number;
		timeouts: number;
	}

	interface Instance extends EventEmitter, PromiseLike<Result> {
		on(
			event: 'response',
			listener: (
				client: unknown,
				statusCode: number,
				resBytes: number,
				responseTime: number
			) => void
		): this;
	}

	function autocannon(options: Options): Instance;
	export default autocannon;
}
