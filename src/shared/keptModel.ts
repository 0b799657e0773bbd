/**
 * A model kept in the workbook: a model description (src/engine/portable/) written as cells of a
 * hidden sheet, one model a row, so it survives save and reopen and a formula can reach it.
 *
 * Layout of one kept model (a row of the sheet KEPT_SHEET, from column A):
 *   A: the header, one text:
 *      "oddsmith-model 1.0; parts 3; characters 81234; check 9f0c1a2b; written <ISO time>; by Oddsmith 0.1.0; name <name>"
 *   B, C, ...: the description's JSON text in parts of at most PART_CHARS characters, each cell
 *      starting "part k/n:" so that no part can be taken for a formula, a number or a date.
 * Policy (one line each):
 * - A reader takes the range's cells row by row; the first cell is the header, the next n the parts
 *   (n from the header); cells after them are ignored (a whole-row reference such as Models!2:2 works).
 * - The header's format version follows the description's version rule: a newer major is refused
 *   (DESCRIPTION_NEWER) before anything else is read.
 * - A missing, reordered or edited part is refused (KEPT_PART, KEPT_DAMAGED): the header carries the
 *   text's length and its check (32-bit FNV-1a over the UTF-16 code units, common practice for
 *   detecting accidental change; not a protection against deliberate edits).
 * - The joined text is then read by readDescription, which checks every field.
 * Reference: docs/model-description.md (our own layout).
 */
import { DESCRIPTION_MAJOR, DESCRIPTION_VERSION, type CellValue } from "../engine";
import { problem } from "./messages";
import { MAX_CELL_TEXT } from "./sheetLimits";

/** Name of the hidden sheet that holds kept models. */
export const KEPT_SHEET = "OddsmithModels";
/** Characters of description text per part cell (the prefix "part k/n:" stays well within MAX_CELL_TEXT). */
export const PART_CHARS = 32_000;
/** First word of every header cell. */
export const KEPT_MARK = "oddsmith-model";
/** Text of cell A1 of the kept-models sheet. */
export const KEPT_SHEET_TITLE =
  "Oddsmith keeps fitted models on this sheet, one a row from row 2: column A describes the model, the next cells hold its description in parts. Do not edit them (the add-in checks every part). Score new rows with =ODDS.KEPT(" +
  KEPT_SHEET +
  "!2:2, rows).";

/** What a kept model's header says. */
export interface KeptHeader {
  version: string;
  parts: number;
  characters: number;
  check: string;
  written: string;
  producer: string;
  name: string;
}

/** 32-bit FNV-1a of the text's UTF-16 code units, as 8 lower-case hex digits. */
export function textCheck(text: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(16).padStart(8, "0");
}

/** The header cell's text. */
export function headerText(h: KeptHeader): string {
  return `${KEPT_MARK} ${h.version}; parts ${h.parts}; characters ${h.characters}; check ${h.check}; written ${h.written}; by Oddsmith ${h.producer}; name ${h.name}`;
}

const HEADER_VERSION = /^oddsmith-model (\d+)\.(\d+)(?:;|$)/;
const HEADER = /^oddsmith-model (\d+\.\d+); parts (\d+); characters (\d+); check ([0-9a-f]{8}); written ([^;]*); by Oddsmith ([^;]*); name (.*)$/s;
const PART = /^part (\d+)\/(\d+):/;

/** Where a part cell starts: "part k/n:". */
export function partPrefix(k: number, n: number): string {
  return `part ${k}/${n}:`;
}

/**
 * The cells of one kept model (header, then parts) for a description's JSON text.
 * @param text - JSON.stringify of a ModelDescription
 * @example keptCells(JSON.stringify(desc), { name: "crates", written: "2026-12-05T13:00:00Z", producer: "0.1.0", version: "1.0" })
 */
export function keptCells(text: string, info: { name: string; written: string; producer: string; version?: string }): string[] {
  const parts: string[] = [];
  let at = 0;
  while (at < text.length) {
    let end = Math.min(text.length, at + PART_CHARS);
    // Never split a surrogate pair between two cells.
    const code = text.charCodeAt(end - 1);
    if (end < text.length && code >= 0xd800 && code <= 0xdbff) end--;
    parts.push(text.slice(at, end));
    at = end;
  }
  if (parts.length === 0) parts.push("");
  const n = parts.length;
  const name = info.name.replace(/[\r\n]+/g, " ").trim() || "model";
  const header = headerText({
    version: info.version ?? DESCRIPTION_VERSION,
    parts: n,
    characters: text.length,
    check: textCheck(text),
    written: info.written.replace(/;/g, ","),
    producer: info.producer.replace(/;/g, ","),
    name,
  });
  const cells = [header, ...parts.map((p, k) => partPrefix(k + 1, n) + p)];
  for (const c of cells) if (c.length > MAX_CELL_TEXT) throw new Error("kept part longer than a cell");
  return cells;
}

/** The range's cells row by row (a row, a column or a block). */
function flatten(range: CellValue[][]): CellValue[] {
  const out: CellValue[] = [];
  for (const row of range) {
    if (Array.isArray(row)) for (const v of row) out.push(v);
    else out.push(row as CellValue);
  }
  return out;
}

const shown = (v: CellValue | undefined): string => {
  if (v === null || v === undefined || v === "") return "a blank cell";
  const s = String(v);
  return typeof v === "string" ? `"${s.length > 60 ? s.slice(0, 60) + "..." : s}"` : s;
};

/**
 * Read the header cell of a kept model.
 * @throws OddsmithError KEPT_NOT_FOUND, DESCRIPTION_NEWER, KEPT_HEADER
 */
export function readKeptHeader(first: CellValue | undefined, argument: string): KeptHeader {
  const text = typeof first === "string" ? first.trim() : "";
  if (!text.startsWith(KEPT_MARK)) throw problem("KEPT_NOT_FOUND", { argument, got: shown(first), sheet: KEPT_SHEET });
  const v = HEADER_VERSION.exec(text);
  if (v && Number(v[1]) > DESCRIPTION_MAJOR) {
    const by = /; by Oddsmith ([^;]*);/.exec(text);
    throw problem("DESCRIPTION_NEWER", { version: `${v[1]}.${v[2]}`, producer: by ? by[1] : "(unknown)", supported: DESCRIPTION_VERSION, major: DESCRIPTION_MAJOR });
  }
  const m = HEADER.exec(text);
  if (!m || Number(m[2]) < 1) throw problem("KEPT_HEADER", { argument, got: shown(text) });
  return { version: m[1], parts: Number(m[2]), characters: Number(m[3]), check: m[4], written: m[5], producer: m[6], name: m[7] };
}

/**
 * The description text of a kept model from its cells, with every part checked.
 * @param range - the kept model's cells (its row, or any range starting at its header cell)
 * @throws OddsmithError KEPT_NOT_FOUND, KEPT_HEADER, DESCRIPTION_NEWER, KEPT_PART, KEPT_DAMAGED
 */
export function readKeptText(range: CellValue[][], argument = "model_cells"): { header: KeptHeader; text: string } {
  const cells = flatten(range);
  const header = readKeptHeader(cells[0], argument);
  const n = header.parts;
  const pieces: string[] = [];
  for (let k = 1; k <= n; k++) {
    const v = cells[k];
    const where = { argument, name: header.name, parts: n, part: k, cell: k + 1, got: shown(v), sheet: KEPT_SHEET };
    if (typeof v !== "string") throw problem("KEPT_PART", { ...where, reason: "is missing" });
    const m = PART.exec(v);
    if (!m) throw problem("KEPT_PART", { ...where, reason: `does not start with "${partPrefix(k, n)}"` });
    if (Number(m[1]) !== k || Number(m[2]) !== n) throw problem("KEPT_PART", { ...where, reason: `is "${m[0]}" where "${partPrefix(k, n)}" belongs (parts moved or mixed from two models)` });
    pieces.push(v.slice(m[0].length));
  }
  const text = pieces.join("");
  const check = textCheck(text);
  if (text.length !== header.characters || check !== header.check) {
    throw problem("KEPT_DAMAGED", { name: header.name, got: text.length, gotCheck: check, characters: header.characters, check: header.check });
  }
  return { header, text };
}
