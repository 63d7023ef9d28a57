/** Runs one benchmark module's run() and prints its result as the last line of JSON. */
import { pathToFileURL } from 'node:url';

const file = process.argv[2];
const mod = (await import(pathToFileURL(file).href)) as { run: () => Promise<Record<string, unknown>> };
const result = await mod.run();
console.log(JSON.stringify({ ...result, peakRssMB: process.resourceUsage().maxRSS / 1024 }));
