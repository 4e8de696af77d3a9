// Types for the part of gcode-parser 2.2.0 the benchmark uses (the package ships none).
declare module 'gcode-parser' {
	import type { Transform } from 'node:stream';

	interface ParsedLine {
		line: string;
		words: [string, number | string][];
		ln?: number;
		cs?: number;
		comments?: string[];
	}

	const parser: {
		parseLine(line: string, options?: { flatten?: boolean; lineMode?: string }): ParsedLine;
		GCodeLineStream: new (options?: { batchSize?: number }) => Transform;
	};
	export default parser;
}
