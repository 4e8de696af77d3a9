/**
 * Peak memory while a run goes: RSS and heapUsed sampled on a timer and whenever the run
 * asks (after each chunk), so a short burst between timer ticks is not missed.
 */

/** Peak RSS and heapUsed seen, in bytes, and the values before the run began. */
export interface MemoryPeak {
	baseRss: number;
	baseHeap: number;
	peakRss: number;
	peakHeap: number;
	samples: number;
}

/** Starts sampling; call `sample()` at will and `stop()` at the end. */
export function startSampler(everyMs = 5): {
	sample: () => void;
	stop: () => MemoryPeak;
} {
	const base = process.memoryUsage();
	const peak: MemoryPeak = {
		baseRss: base.rss,
		baseHeap: base.heapUsed,
		peakRss: base.rss,
		peakHeap: base.heapUsed,
		samples: 1
	};
	const sample = () => {
		const m = process.memoryUsage();
		peak.samples++;
		if (m.rss > peak.peakRss) peak.peakRss = m.rss;
		if (m.heapUsed > peak.peakHeap) peak.peakHeap = m.heapUsed;
	};
	const timer = setInterval(sample, everyMs);
	return {
		sample,
		stop: () => {
			clearInterval(timer);
			sample();
			return peak;
		}
	};
}
