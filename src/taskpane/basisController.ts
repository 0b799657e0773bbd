/**
 * The basis section's logic, free of the DOM: it reads the pane's table as the basis builder's
 * source (through the WorkbookPort), previews a recipe, writes the generated columns beside the
 * table (as a live formula or as values), ticks them as predictors in place of their sources, and
 * removes them again. paneView.ts renders its state; every workbook access goes through the port.
 *
 * Policies (one line each):
 * - The source is the pane's table without any block this section generated beside it.
 * - One generated block at a time: writing again first removes the previous block.
 * - Every outcome (preview, write, removal, failure) becomes `line`, a catalogue message or a pane text.
 */
import { OddsmithError, problem } from "../shared/messages";
import { parseAddress, rectAddress } from "./a1";
import {
  basisDerived,
  type BasisSource,
  type ColumnSummary,
  executeWrite,
  generatedBasis,
  planWrite,
  previewBasis,
  readBasisSource,
  recipeFromChoices,
  type TransformChoice,
  undoWrite,
  type UndoPlan,
} from "./basisBuilder";
import type { PaneController } from "./paneController";
import type { WorkbookPort } from "./port";

export type BasisChange = "source" | "line";

/** The line the section shows under the recipe, and whether it reports a problem. */
export interface BasisLine {
  text: string;
  error: boolean;
}

/** One transform picked for a column in the section's list ("" = the column as it is). */
export interface ColumnPick {
  column: string;
  transform: TransformChoice["transform"] | "";
  /** The transform's main setting ("df", "degree", "k") and its value, when it has one. */
  setting: string | null;
  value: number;
}

export class BasisController {
  /** The table as the builder reads it, or null (no table yet, or it cannot be used: see `sourceProblem`). */
  source: BasisSource | null = null;
  /** Why the table cannot be used for basis columns, or null. */
  sourceProblem: string | null = null;
  /** The block this section wrote last (what Remove takes away), or null. */
  written: UndoPlan | null = null;
  line: BasisLine = { text: "", error: false };

  private readonly listeners = new Set<(change: BasisChange) => void>();
  private readonly unsubscribe: () => void;

  constructor(
    private readonly pane: PaneController,
    private readonly port: WorkbookPort,
  ) {
    this.unsubscribe = pane.subscribe((change) => {
      if (change === "data") void this.loadSource();
    });
  }

  subscribe(listener: (change: BasisChange) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  private emit(change: BasisChange): void {
    for (const l of [...this.listeners]) l(change);
  }

  private say(text: string, error = false): void {
    this.line = { text, error };
    this.emit("line");
  }

  /** Number columns of the source: the ones the section offers transforms for. */
  numericColumns(): ColumnSummary[] {
    return this.source ? this.source.summaries.filter((s) => s.kind === "number") : [];
  }

  /** Read the pane's table (without the block generated beside it) as the builder's source. */
  async loadSource(): Promise<void> {
    const d = this.pane.data;
    if (!d) return;
    try {
      const rect = parseAddress(d.block.address)!;
      const right = this.written ? Math.min(rect.right, parseAddress(this.written.address)!.left - 2) : rect.right;
      this.source = await readBasisSource(this.port, { sheet: d.sheet, address: rectAddress({ ...rect, right }) });
      this.sourceProblem = null;
    } catch (e) {
      this.source = null;
      this.sourceProblem = e instanceof OddsmithError ? e.message : problem("INTERNAL", { doing: "reading the table for basis columns" }).message;
    }
    this.emit("source");
  }

  /** The recipe of the section's list: one item per column with a transform. */
  recipeOf(picks: readonly ColumnPick[]): string {
    const columns = picks
      .filter((p) => p.transform !== "")
      .map((p) => ({
        name: p.column,
        transforms: [{ transform: p.transform as TransformChoice["transform"], settings: p.setting ? { [p.setting]: p.value } : undefined }],
      }));
    return recipeFromChoices({ columns });
  }

  /** Preview a recipe as it is typed: the new columns and warnings, or the recipe's problem. */
  preview(recipe: string): void {
    const text = recipe.trim();
    if (!this.source || text === "") {
      this.say("");
      return;
    }
    const p = previewBasis(this.source, text);
    if (p.error) this.say(p.error.message, true);
    else this.say([`New columns: ${p.names.join(", ")}.`, ...p.warnings.map((w) => w.message)].join(" "));
  }

  /**
   * Write the recipe's columns beside the table (replacing the block written before), widen the
   * pane's table over them and tick them as predictors in place of their source columns.
   */
  async write(recipe: string, mode: "formula" | "values"): Promise<void> {
    const text = recipe.trim();
    const source = this.source;
    const d = this.pane.data;
    if (!source || !d || text === "") {
      this.say("Choose a transform for a column (or type a recipe) first.");
      return;
    }
    try {
      if (this.written) await this.removeWritten();
      const plan = planWrite(source, text, { place: "beside", mode });
      const result = await executeWrite(this.port, plan);
      if (result.status === "blocked") {
        this.say(result.message.message);
        return;
      }
      this.written = result.undo;
      // Remember the columns (they follow the table's rows) and teach the plot how to recompute them.
      const start = source.table.firstRow - 2;
      const derived = basisDerived(text, source.block.values.slice(start, start + source.table.rows + 1));
      this.pane.trackBasis(generatedBasis(source, plan, result), derived);
      await this.widenTable(d.sheet, d.block.address, result.address);
      this.tickGenerated(plan.names, derived.sources);
      this.say(`Added ${plan.names.length} columns at ${result.sheet}!${result.address}, ticked as predictors in place of ${derived.sources.join(", ")}. Press Fit to refit.`);
    } catch (e) {
      this.say(e instanceof OddsmithError ? e.message : "The basis columns could not be written.", true);
    }
  }

  /** Re-read the pane's table over the generated block too. */
  private async widenTable(sheet: string, tableAddress: string, generatedAddress: string): Promise<void> {
    const tableRect = parseAddress(tableAddress)!;
    const genRect = parseAddress(generatedAddress)!;
    await this.pane.useTable(sheet, rectAddress({ ...tableRect, right: Math.max(tableRect.right, genRect.right) }), true);
  }

  /** Tick the generated columns as predictors and untick the columns they were made from. */
  private tickGenerated(names: readonly string[], sources: readonly string[]): void {
    const data = this.pane.data;
    const choice = this.pane.choice;
    if (!data || !choice) return;
    const index = (n: string) => data.columns.findIndex((c) => c.name === n);
    const generated = names.map(index).filter((i) => i >= 0);
    const sourceIdx = new Set(sources.map(index));
    const keep = choice.predictors.filter((p) => !sourceIdx.has(p));
    this.pane.setChoice({ predictors: [...new Set([...keep, ...generated])].sort((a, b) => a - b) });
  }

  /** Remove the generated block, and say so (or why it could not be removed). */
  async remove(): Promise<void> {
    if (!this.written) return;
    try {
      await this.removeWritten();
      this.say("Generated columns removed.");
    } catch (e) {
      this.say(e instanceof OddsmithError ? e.message : problem("INTERNAL", { doing: "removing the generated columns" }).message, true);
    }
  }

  /** Clear the generated block as it stands now (it may have followed the table's rows); re-read the table without it. */
  private async removeWritten(): Promise<void> {
    const written = this.written;
    if (!written) return;
    const current = this.pane.untrackBasis(written.sheet, written.address);
    const undo = current ? { ...written, address: rectAddress(current.rect) } : written;
    await undoWrite(this.port, undo);
    this.written = null;
    const d = this.pane.data;
    if (d) {
      const rect = parseAddress(d.block.address)!;
      const gen = parseAddress(undo.address)!;
      if (rect.right >= gen.left) await this.pane.useTable(d.sheet, rectAddress({ ...rect, right: gen.left - 2 }), true);
    }
  }

  dispose(): void {
    this.unsubscribe();
    this.listeners.clear();
  }
}
