// The phone's API types, generated from the server's OpenAPI schema (drf-spectacular) with
// openapi-typescript into src/api-schema.ts. `node scripts/api-types.mjs` rewrites the file;
// with --check it fails, writing nothing, when the committed file and the schema disagree
// (make test runs the check). The schema comes from `manage.py spectacular` run with the
// project's venv (PYTHON overrides ../.venv/bin/python). Its prose (descriptions and summaries,
// drawn from docstrings) is left out: the check is about shapes, and a reworded docstring on the
// server is no disagreement.
import { execFileSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { astToString, openapiTS } from "parapet-openapi-types";

const HERE = new URL("..", import.meta.url);
const ROOT = fileURLToPath(new URL("..", HERE));
const TARGET = fileURLToPath(new URL("src/api-schema.ts", HERE));
const PYTHON = process.env.PYTHON ?? `${ROOT}.venv/bin/python`;

const HEADER = `/**
 * Generated from the server's OpenAPI schema (manage.py spectacular) by scripts/api-types.mjs
 * with openapi-typescript: do not edit. After changing the API run \`npm run api-types\` in
 * frontend/; make test fails while this file and the schema disagree. The phone's own names for
 * these shapes are in types.ts.
 */

`;

const schema = execFileSync(PYTHON, ["manage.py", "spectacular", "--format", "openapi-json"], {
  cwd: ROOT,
  env: { ...process.env, DJANGO_DEBUG: "true" },
  encoding: "utf8",
  maxBuffer: 64 * 1024 * 1024,
  stdio: ["ignore", "pipe", "inherit"],
});
/** The schema without its prose; a field that happens to be called "description" stays. */
function shapesOnly(node, inProperties = false) {
  if (Array.isArray(node)) return node.map((item) => shapesOnly(item));
  if (node === null || typeof node !== "object") return node;
  const kept = {};
  for (const [key, value] of Object.entries(node)) {
    if (!inProperties && (key === "description" || key === "summary") && typeof value === "string") continue;
    kept[key] = shapesOnly(value, !inProperties && key === "properties");
  }
  return kept;
}

const generated = HEADER + astToString(await openapiTS(shapesOnly(JSON.parse(schema))));

if (process.argv.includes("--check")) {
  let committed = "";
  try {
    committed = readFileSync(TARGET, "utf8");
  } catch {
    committed = "";
  }
  if (committed !== generated) {
    const a = committed.split("\n");
    const b = generated.split("\n");
    let line = 0;
    while (line < Math.min(a.length, b.length) && a[line] === b[line]) line += 1;
    console.error(
      `frontend/src/api-schema.ts does not match the server's OpenAPI schema (first difference at line ${line + 1}:\n` +
        `  committed: ${a[line] ?? "(end of file)"}\n  schema:    ${b[line] ?? "(end of file)"}).\n` +
        "Run `npm run api-types` in frontend/, then fix what the type check finds and commit both.",
    );
    process.exit(1);
  }
  console.log("frontend/src/api-schema.ts matches the server's OpenAPI schema.");
} else {
  writeFileSync(TARGET, generated);
  console.log(`wrote ${TARGET}`);
}
