/** Writes the expected report texts once (then review them by reading): npx tsx tests/report/make-expected.ts */
import { writeFileSync } from 'node:fs';
import { methodsReport } from '../../src/core/report/index.ts';
import { FACTS, LEDGER, fixedResults } from './inputs.ts';

const { check, cmp } = fixedResults();
writeFileSync(new URL('./expected-band-check.md', import.meta.url), methodsReport(check, FACTS, LEDGER).markdown);
writeFileSync(new URL('./expected-compare.md', import.meta.url), methodsReport(cmp, FACTS, LEDGER).markdown);
