// Total gzipped size of the JS and CSS the first page load fetches; fails above the budget.
import { readFileSync, readdirSync, statSync } from "node:fs";
import { join, extname } from "node:path";
import { gzipSync } from "node:zlib";

const OUT = new URL("../../compliance/static/app/", import.meta.url).pathname;
// The phone's first load: at most 50 kB of JS and CSS gzipped (issue 16's target).
const BUDGET = 50 * 1024;

function walk(dir) {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    return statSync(path).isDirectory() ? walk(path) : [path];
  });
}

const html = readFileSync(join(OUT, "index.html"), "utf8");
const referenced = new Set([...html.matchAll(/(?:src|href)="\/static\/app\/([^"]+)"/g)].map((m) => m[1]));
let total = 0;
for (const file of walk(OUT)) {
  const rel = file.slice(OUT.length);
  if (![".js", ".css"].includes(extname(file)) || rel === "sw.js") continue;
  if (!referenced.has(rel)) continue;
  const size = gzipSync(readFileSync(file), { level: 9 }).length;
  total += size;
  console.log(`  ${rel.padEnd(40)} ${(size / 1024).toFixed(1)} kB gzipped`);
}
console.log(`first-load JS+CSS: ${total} bytes gzipped (${(total / 1024).toFixed(1)} kB; budget ${BUDGET / 1024} kB)`);
if (total === 0) {
  console.error("No JS or CSS found in index.html; the build looks wrong.");
  process.exit(1);
}
if (total > BUDGET) {
  console.error(`Over the ${BUDGET / 1024} kB budget.`);
  process.exit(1);
}
