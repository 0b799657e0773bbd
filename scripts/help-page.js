/**
 * Renders docs/functions.md into the self-contained help page (dist/help.html) that the cell
 * functions' @helpurl links open. Handles the small Markdown subset that file uses: headings
 * (with an explicit anchor written `## Title {#anchor}`), paragraphs, bullet lists, fenced code,
 * tables, `inline code` and **bold**. Everything else is escaped and shown as text.
 * No network, no dependencies: the page must work offline.
 */
/* eslint-env node */
// The page carries the same Content-Security-Policy meta as the pane and workbench pages (and as the
// development server's header): no inline style or script at all. Its look comes from the add-in's
// own style sheet, taskpane.css (the `.osm-help` rules), which the build copies beside help.html.
const { CONTENT_SECURITY_POLICY } = require("./static-server.cjs");

function escapeHtml(text) {
  return text.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

function inline(text) {
  return escapeHtml(text)
    .replace(/`([^`]+)`/g, "<code>$1</code>")
    .replace(/\*\*([^*]+)\*\*/g, "<strong>$1</strong>");
}

/** Split a table row "| a | b |" into trimmed cells. */
function tableCells(line) {
  return line.trim().replace(/^\|/, "").replace(/\|$/, "").split("|").map((c) => c.trim());
}

/**
 * @param {string} markdown - the text of docs/functions.md
 * @returns {string} a complete HTML document
 */
function renderHelpPage(markdown) {
  const lines = markdown.replace(/\r\n/g, "\n").split("\n");
  const out = [];
  let title = "Oddsmith help";
  let i = 0;
  while (i < lines.length) {
    const line = lines[i];
    if (line.startsWith("```")) {
      const code = [];
      i++;
      while (i < lines.length && !lines[i].startsWith("```")) code.push(lines[i++]);
      i++;
      out.push(`<pre><code>${escapeHtml(code.join("\n"))}</code></pre>`);
      continue;
    }
    const heading = /^(#{1,4})\s+(.*?)(?:\s+\{#([A-Za-z0-9_-]+)\})?\s*$/.exec(line);
    if (heading) {
      const level = heading[1].length;
      if (level === 1) title = heading[2];
      const id = heading[3] ? ` id="${heading[3]}"` : "";
      out.push(`<h${level}${id}>${inline(heading[2])}</h${level}>`);
      i++;
      continue;
    }
    if (/^\s*\|/.test(line)) {
      const rows = [];
      while (i < lines.length && /^\s*\|/.test(lines[i])) rows.push(lines[i++]);
      const body = rows.filter((r, k) => !(k === 1 && /^\s*\|[\s:|-]+\|\s*$/.test(r)));
      const [head, ...rest] = body.map(tableCells);
      out.push(
        "<table><thead><tr>" +
          head.map((c) => `<th>${inline(c)}</th>`).join("") +
          "</tr></thead><tbody>" +
          rest.map((r) => "<tr>" + r.map((c) => `<td>${inline(c)}</td>`).join("") + "</tr>").join("") +
          "</tbody></table>",
      );
      continue;
    }
    if (/^\s*[-*]\s+/.test(line)) {
      const items = [];
      while (i < lines.length && /^\s*[-*]\s+/.test(lines[i])) {
        let item = lines[i++].replace(/^\s*[-*]\s+/, "");
        while (i < lines.length && /^\s{2,}\S/.test(lines[i]) && !/^\s*[-*]\s+/.test(lines[i])) item += " " + lines[i++].trim();
        items.push(`<li>${inline(item)}</li>`);
      }
      out.push(`<ul>${items.join("")}</ul>`);
      continue;
    }
    if (line.trim() === "") {
      i++;
      continue;
    }
    const para = [];
    while (i < lines.length && lines[i].trim() !== "" && !/^(#|```|\s*\||\s*[-*]\s)/.test(lines[i])) para.push(lines[i++].trim());
    out.push(`<p>${inline(para.join(" "))}</p>`);
  }
  return [
    "<!doctype html>",
    '<html lang="en"><head><meta charset="utf-8">',
    `<meta http-equiv="Content-Security-Policy" content="${escapeHtml(CONTENT_SECURITY_POLICY)}">`,
    `<title>${escapeHtml(title)}</title>`,
    '<link rel="icon" href="assets/icon-32.png">',
    '<link rel="stylesheet" href="taskpane.css">',
    '</head><body class="osm-help">',
    ...out,
    "</body></html>",
    "",
  ].join("\n");
}

module.exports = { renderHelpPage };
