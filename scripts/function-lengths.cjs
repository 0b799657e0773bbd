#!/usr/bin/env node
// Lists the source files over a line limit and the functions over a line limit under the given
// folders (default src/engine): `node scripts/function-lengths.cjs [--files=500] [--functions=80] [dir...]`.
// Exits 1 when any is over. Functions are declarations, methods, arrows and function expressions,
// measured from their first to their last line (nested functions are measured on their own too).
const fs = require("fs");
const path = require("path");
const ts = require("typescript");

const args = process.argv.slice(2);
const limit = (name, dflt) => Number((args.find((a) => a.startsWith(`--${name}=`)) || `=${dflt}`).split("=")[1]);
const fileLimit = limit("files", 500);
const fnLimit = limit("functions", 80);
const dirs = args.filter((a) => !a.startsWith("--"));
if (dirs.length === 0) dirs.push("src/engine");

function walk(dir, out) {
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) walk(p, out);
    else if (/\.ts$/.test(e.name) && !/\.d\.ts$/.test(e.name)) out.push(p);
  }
  return out;
}

const over = [];
for (const file of dirs.flatMap((d) => walk(d, []))) {
  const text = fs.readFileSync(file, "utf8");
  const lines = text.split("\n").length;
  if (lines > fileLimit) over.push(`${file}: file ${lines} lines`);
  const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true);
  const visit = (node) => {
    if (ts.isFunctionLike(node) && node.body) {
      const a = sf.getLineAndCharacterOfPosition(node.getStart(sf)).line;
      const b = sf.getLineAndCharacterOfPosition(node.end).line;
      const n = b - a + 1;
      if (n > fnLimit) {
        const name = node.name ? node.name.getText(sf) : ts.isVariableDeclaration(node.parent) ? node.parent.name.getText(sf) : "(anonymous)";
        over.push(`${file}:${a + 1}: function ${name} ${n} lines`);
      }
    }
    ts.forEachChild(node, visit);
  };
  visit(sf);
}
for (const o of over) console.log(o);
console.log(over.length ? `${over.length} over the limits (files ${fileLimit}, functions ${fnLimit} lines)` : `none over the limits (files ${fileLimit}, functions ${fnLimit} lines)`);
process.exit(over.length ? 1 : 0);
