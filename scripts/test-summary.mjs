// Adds up the suites' JSON reports and prints the one line `npm test` ends with.
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";

const dir = process.argv[2];
const read = (name) => {
  const file = join(dir, name);
  return existsSync(file) ? JSON.parse(readFileSync(file, "utf8")) : null;
};

let passed = 0;
let failed = 0;
const lines = [];
const add = (suite, p, f) => {
  passed += p;
  failed += f;
  lines.push(`  ${suite.padEnd(12)} ${p} passed, ${f} failed`);
};

for (const suite of ["typecheck", "build"]) {
  const r = read(`${suite}.json`);
  if (r) add(suite, r.passed, r.failed);
  else add(suite, 0, 1);
}
for (const suite of ["unit", "integration"]) {
  const r = read(`${suite}.json`);
  // A suite that wrote no report (it crashed, or never ran) counts as one failure.
  if (!r) add(suite, 0, 1);
  else add(suite, r.numPassedTests, r.numFailedTests + (r.success === false && r.numFailedTests === 0 ? 1 : 0));
}
const e2e = read("e2e.json");
if (!e2e) { if (!process.env.CW_SKIP_E2E) add("e2e", 0, 1); }
else add("e2e", e2e.stats.expected + (e2e.stats.flaky ?? 0), e2e.stats.unexpected + (e2e.errors?.length ? 1 : 0));

console.log("\n" + lines.join("\n"));
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed === 0 ? 0 : 1);
