// Prints one closing line for the whole run: "tests: N passed, N failed" (Vitest + Playwright).
import { readFileSync } from 'node:fs';

let passed = 0;
let failed = 0;
let skipped = 0;
const [vitestFile, playwrightFile] = process.argv.slice(2);
const v = JSON.parse(readFileSync(vitestFile, 'utf8'));
passed += v.numPassedTests;
failed += v.numFailedTests;
skipped += v.numPendingTests + v.numTodoTests;
const p = JSON.parse(readFileSync(playwrightFile, 'utf8'));
passed += p.stats.expected + p.stats.flaky;
failed += p.stats.unexpected;
skipped += p.stats.skipped;
console.log(`\ntests: ${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`);
process.exit(failed > 0 ? 1 : 0);
