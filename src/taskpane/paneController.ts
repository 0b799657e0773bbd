/**
 * The task pane's logic, free of the DOM: which table it works on, the model set-up, running the
 * fit (cancellable, with progress), writing the live formulas onto the results sheet, the borderline
 * review, highlighting and selecting rows, and refreshing when the data changes. paneView.ts renders
 * its state; tests drive it directly against the in-memory workbook.
 *
 * Every workbook access goes through the WorkbookPort. Every failure becomes a status with a
 * catalogue message (what is wrong, where, what to do); nothing is only logged.
 */
import { readLabels, scoreRows, type RowScores, type CellValue, type Diagnostic, type ModelDescription } from "../engine";
import { KEPT_SHEET } from "../shared/keptModel";
import { descriptionFile, keepInWorkbook, paneDescription, SCORING_SHEET, scoringWrites, type KeptPlace, type ScoringWrites } from "./portableModel";
import { OddsmithError, problem } from "../shared/messages";
import { fitFailure } from "../shared/fitService";
import { rectAddress } from "./a1";
import { basisDerived, followTableRows, type GeneratedBasis, sourceCellsChanged, staleValuesNote, type BuilderMessage } from "./basisBuilder";
import { type DataTable, describeBlock, keyColumn, tableReference } from "./dataTable";
import { chooseRunner, FitCancelled, FitFailed, type FitOutcome, type FitPhase } from "./fitRunner";
import {
  DEFAULT_CHOICE,
  layoutWrites,
  modelInputs,
  RESULTS_SHEET,
  resultsLayout,
  type ResultsLayout,
  type SetupChoice,
} from "./modelSetup";
import { axisCandidates, buildPlot, type DerivedColumns, type PlotModel } from "./plotGeometry";
import type { SheetBlock, WorkbookPort } from "./port";
import { borderlineSheetRows, buildReview, DEFAULT_REVIEW, type ReviewResult, type ReviewSettings } from "./review";

export type StatusPhase = "idle" | "reading" | "writing" | "fitting" | "scoring" | "done" | "cancelled" | "failed";

export interface PaneStatus {
  phase: StatusPhase;
  /** Plain-language line for the status area. */
  message: string;
  /** 0..1 when known (reading in chunks), else null (an indeterminate bar). */
  progress: number | null;
  /** True while something runs that Cancel can stop. */
  busy: boolean;
}

export type PaneChange = "data" | "choice" | "status" | "fit" | "review" | "highlight" | "basis";

export interface PaneOptions {
  port: WorkbookPort;
  /** URL of the fit worker script, or null where workers cannot run. */
  workerUrl?: string | null;
  /** Force the worker or the inline runner; "auto" picks by size. */
  runner?: "auto" | "worker" | "inline";
  /** Quiet time after a data change before refitting, in milliseconds. */
  refreshDelayMs?: number;
}

/** Default quiet time after an edit: long enough to group a burst of typing, short enough to feel live. */
export const DEFAULT_REFRESH_DELAY_MS = 400;

/** Guess the label column: the last column with exactly two classes, else the last text column with few. */
export function guessLabel(data: DataTable): number {
  const cols = data.columns.filter((c) => !c.allDistinct && c.levels.length >= 2);
  const two = cols.filter((c) => c.levels.length === 2);
  if (two.length) return two[two.length - 1].index;
  const few = cols.filter((c) => c.kind === "text" && c.levels.length <= 10);
  if (few.length) return few[few.length - 1].index;
  return data.columns.length - 1;
}

/** Default predictors: every numeric column except the label. */
export function guessPredictors(data: DataTable, label: number): number[] {
  return data.columns.filter((c) => c.index !== label && (c.kind === "number" || c.kind === "boolean")).map((c) => c.index);
}

export class PaneController {
  data: DataTable | null = null;
  choice: SetupChoice | null = null;
  reviewSettings: ReviewSettings = { ...DEFAULT_REVIEW };
  outcome: FitOutcome | null = null;
  review: ReviewResult | null = null;
  layout: ResultsLayout | null = null;
  /** Sheet rows currently highlighted by the pane. */
  highlighted: number[] = [];
  /** Generated columns known in this session (from the basis builder), for the plot. */
  derived: DerivedColumns[] = [];
  status: PaneStatus = { phase: "idle", message: "Select the data table in the sheet, then press Use selection.", progress: null, busy: false };
  /** Diagnostics of the last fit (warnings and notes), shown under the status. */
  diagnostics: Diagnostic[] = [];
  /**
   * Basis columns the pane generated, kept in step with the table's rows on refresh
   * (basisBuilder.followTableRows); each carries the note the pane shows about it.
   */
  generated: GeneratedBasis[] = [];

  private readonly port: WorkbookPort;
  private readonly options: Required<Omit<PaneOptions, "port">>;
  private readonly listeners = new Set<(change: PaneChange) => void>();
  private abort: AbortController | null = null;
  private stopListening: (() => void) | null = null;
  private refreshTimer: ReturnType<typeof setTimeout> | null = null;
  /** The refresh under way, and whether another change arrived meanwhile (refreshes never overlap). */
  private refreshing: Promise<void> | null = null;
  private refreshAgain = false;
  /** Generated column names to tick as predictors once the table is re-read (a recipe made new ones). */
  private pendingTicks: string[] = [];
  /** The formulas on the results sheet match this set-up (no rewrite needed on refresh). */
  private writtenFor: string | null = null;

  constructor(options: PaneOptions) {
    this.port = options.port;
    this.options = {
      workerUrl: options.workerUrl ?? null,
      runner: options.runner ?? "auto",
      refreshDelayMs: options.refreshDelayMs ?? DEFAULT_REFRESH_DELAY_MS,
    };
  }

  subscribe(listener: (change: PaneChange) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  private emit(change: PaneChange): void {
    for (const l of [...this.listeners]) l(change);
  }

  private setStatus(status: Partial<PaneStatus> & { phase: StatusPhase; message: string }): void {
    this.status = { progress: null, busy: false, ...status };
    this.emit("status");
  }

  /** A failure as a status: catalogue problems keep their text; anything else is INTERNAL. */
  private fail(e: unknown, doing: string): void {
    // A worker's failure already carries a catalogue message (or a plain one written for users).
    const message = e instanceof OddsmithError || e instanceof FitFailed ? e.message : problem("INTERNAL", { doing }).message;
    this.setStatus({ phase: "failed", message });
  }

  /** Progress of a chunked read or write by the port (Excel reads large tables in pieces). */
  transferProgress(p: { task: "read" | "write"; done: number; total: number }): void {
    if (p.total <= 0) return;
    const pct = Math.round((100 * p.done) / p.total);
    this.setStatus({
      phase: p.task === "read" ? "reading" : "writing",
      message: `${p.task === "read" ? "Reading" : "Writing"} ${p.done.toLocaleString("en-US")} of ${p.total.toLocaleString("en-US")} cells (${pct}%)...`,
      progress: p.done / p.total,
      busy: true,
    });
  }

  // ---- the table ---------------------------------------------------------------------------

  /** Read the selected table (or the table around the active cell) and propose a set-up. */
  async useSelection(): Promise<void> {
    try {
      this.setStatus({ phase: "reading", message: "Reading the selected table...", busy: true });
      const block = await this.port.selectedBlock();
      await this.adoptBlock(describeBlock(block), { listen: true, keepChoice: false });
    } catch (e) {
      this.fail(e, "reading the selected table");
    }
  }

  /**
   * Read a table by sheet and address. `keepChoice` keeps the set-up (matched by column name), as
   * when the table grows by generated basis columns.
   */
  async useTable(sheet: string, address: string, keepChoice = false): Promise<void> {
    try {
      this.setStatus({ phase: "reading", message: `Reading ${sheet}!${address}...`, busy: true });
      const block = await this.port.readBlock(sheet, address);
      await this.adoptBlock(describeBlock(block), { listen: true, keepChoice });
    } catch (e) {
      this.fail(e, "reading the table");
    }
  }

  private async adoptBlock(data: DataTable, how: { listen: boolean; keepChoice: boolean }): Promise<void> {
    const previous = this.data;
    this.data = data;
    if (!how.keepChoice || !this.choice || !previous) {
      const label = guessLabel(data);
      this.choice = { ...DEFAULT_CHOICE, label, predictors: guessPredictors(data, label) };
      this.outcome = null;
      this.review = null;
      this.writtenFor = null;
    } else {
      // Same table re-read after an edit: keep the choice by column name.
      const map = (i: number) => data.columns.findIndex((c) => c.name === previous.columns[i]?.name);
      const label = map(this.choice.label);
      const predictors = this.choice.predictors.map(map).filter((i) => i >= 0);
      this.choice = { ...this.choice, label: label >= 0 ? label : this.choice.label, predictors };
    }
    if (how.listen) {
      this.stopListening?.();
      this.stopListening = await this.port.onChanged(data.sheet, () => this.scheduleRefresh());
      this.setStatus({
        phase: "idle",
        message: `Using ${data.sheet}!${data.block.address}: ${data.table.rows.toLocaleString("en-US")} rows, ${data.columns.length} columns. Check the set-up, then press Fit.`,
      });
    }
    this.emit("data");
    this.emit("choice");
  }

  /** Classes found in the chosen label column (for the class picker), or [] when unreadable. */
  labelClasses(): string[] {
    if (!this.data || !this.choice) return [];
    try {
      return readLabels(this.data.table.columns[this.choice.label]).classes;
    } catch {
      return [];
    }
  }

  setChoice(patch: Partial<SetupChoice>): void {
    if (!this.choice) return;
    const next = { ...this.choice, ...patch };
    if (patch.label !== undefined && patch.label !== this.choice.label) {
      next.predictors = next.predictors.filter((p) => p !== patch.label);
      // The old label's class means nothing for the new label (unless this same change names one).
      if (patch.focusClass === undefined) next.focusClass = null;
    }
    this.choice = next;
    if (patch.threshold !== undefined) this.reviewSettings = { ...this.reviewSettings, threshold: patch.threshold };
    this.emit("choice");
  }

  // ---- fitting -----------------------------------------------------------------------------

  /** Stop a running fit. */
  cancel(): void {
    if (this.abort) {
      this.abort.abort();
      this.abort = null;
    }
  }

  /**
   * Fit the chosen model, write (or keep) the live formulas on the results sheet, then build the
   * borderline review. `write` false refits without touching the workbook (data refresh).
   */
  async fit(write = true): Promise<void> {
    if (!this.data || !this.choice) {
      this.setStatus({ phase: "failed", message: "No table yet: select the data in the sheet and press Use selection." });
      return;
    }
    this.cancel();
    const abort = new AbortController();
    this.abort = abort;
    const data = this.data;
    const choice = this.choice;
    try {
      const classCount = Math.max(2, this.labelClasses().length);
      const inputs = modelInputs(data, choice, classCount);
      const job = { labels: inputs.labels, predictors: inputs.predictors, options: inputs.options, threshold: choice.threshold };
      const runner = chooseRunner(job, this.options.workerUrl, this.options.runner);
      const onPhase = (phase: FitPhase) => {
        if (abort.signal.aborted || phase === "done") return;
        this.setStatus({
          phase,
          message: phase === "fitting" ? `Fitting the model on ${data.table.rows.toLocaleString("en-US")} rows...` : "Scoring the rows...",
          busy: true,
        });
      };
      const outcome = await runner.run(job, onPhase, abort.signal);
      if (abort.signal.aborted) throw new FitCancelled();
      const failure = fitFailure(outcome.model);
      this.outcome = outcome;
      this.diagnostics = outcome.model.fit.diagnostics;
      if (failure) {
        this.review = null;
        this.emit("fit");
        this.emit("review");
        this.setStatus({ phase: "failed", message: failure.message });
        return;
      }
      // The formulas' ranges follow the table's rows (tableReference), so a grown table rewrites them.
      const key = JSON.stringify([data.sheet, tableReference(data), choice, classCount]);
      if (write && this.writtenFor !== key) {
        this.setStatus({ phase: "writing", message: "Writing the formulas onto the results sheet...", busy: true });
        await this.writeResults(data, choice, outcome.model.fit.classes.length);
        this.writtenFor = key;
      }
      this.reviewSettings = { ...this.reviewSettings, threshold: choice.threshold };
      this.refreshReview();
      this.emit("fit");
      const seconds = (outcome.elapsedMs / 1000).toFixed(outcome.elapsedMs < 1000 ? 2 : 1);
      const where = this.layout ? ` Live formulas are on the sheet "${this.layout.sheet}".` : "";
      this.setStatus({
        phase: "done",
        message: `Fitted on ${outcome.model.fit.rowsUsed.toLocaleString("en-US")} rows in ${seconds} s${outcome.runner === "worker" ? " (in the background)" : ""}.${where}`,
      });
    } catch (e) {
      if (e instanceof FitCancelled) {
        this.setStatus({ phase: "cancelled", message: "Fit cancelled. Nothing was written; press Fit to start again." });
        return;
      }
      this.fail(e, "fitting the model");
    } finally {
      if (this.abort === abort) this.abort = null;
    }
  }

  private async writeResults(data: DataTable, choice: SetupChoice, classCount: number): Promise<void> {
    let sheet = this.layout?.sheet;
    const sheets = await this.port.sheetNames();
    if (!sheet || !sheets.includes(sheet)) sheet = await this.port.addSheet(RESULTS_SHEET);
    if (this.layout && this.layout.sheet === sheet) {
      // Remove the previous set-up's formulas (their spills go with them).
      for (const a of this.layout.anchors) await this.port.clear(sheet, a.at);
    }
    const layout = resultsLayout(data, choice, classCount, sheet);
    for (const w of layoutWrites(layout)) await this.port.write(w);
    this.layout = layout;
  }

  // ---- portable model ----------------------------------------------------------------------

  /** Where the model was last kept in the workbook (this session), or null. */
  kept: KeptPlace | null = null;

  /** The description of the fitted model, or PORTABLE_NO_FIT. */
  description(action: string): ModelDescription {
    const model = this.outcome?.model;
    if (!model || !this.data || !this.choice || fitFailure(model)) throw problem("PORTABLE_NO_FIT", { action });
    const label = this.data.columns[this.choice.label].name;
    return paneDescription(model, `${label} model`, new Date().toISOString());
  }

  /** Keep the fitted model's description in the workbook (a row of the hidden kept-models sheet). */
  async keepModel(): Promise<void> {
    try {
      const desc = this.description("keep");
      this.setStatus({ phase: "writing", message: "Keeping the model in the workbook...", busy: false });
      const place = await keepInWorkbook(this.port, desc);
      this.kept = place;
      this.setStatus({
        phase: "done",
        message: `Kept "${desc.name}" in the workbook (hidden sheet ${KEPT_SHEET}, row ${place.row}, ${place.parts} ${place.parts === 1 ? "part" : "parts"}); it is saved with the workbook. Score new rows without refitting with =ODDS.KEPT(${place.reference}, rows).`,
      });
    } catch (e) {
      this.fail(e, "keeping the model in the workbook");
    }
  }

  /** The description file to download, or null (with the reason in the status) when there is no fit. */
  descriptionDownload(): { name: string; text: string } | null {
    try {
      const file = descriptionFile(this.description("download"));
      this.setStatus({ phase: "done", message: `Saved the description as ${file.name} (made on this computer; nothing was sent anywhere).` });
      return file;
    } catch (e) {
      this.fail(e, "preparing the description file");
      return null;
    }
  }

  /** Write the model as plain formulas (no add-in needed) on the scoring sheet. */
  async writeScoringFormulas(): Promise<ScoringWrites | null> {
    try {
      const desc = this.description("write as formulas");
      const data = this.data as DataTable;
      const sheets = await this.port.sheetNames();
      if (sheets.includes(SCORING_SHEET)) await this.port.clear(SCORING_SHEET, "A:XFD");
      else await this.port.addSheet(SCORING_SHEET);
      const out = scoringWrites(desc, data, this.choice as SetupChoice, SCORING_SHEET);
      this.setStatus({ phase: "writing", message: "Writing the scoring formulas...", busy: false });
      for (const w of out.writes) await this.port.write(w);
      const notes = out.notes.length ? ` ${out.notes.join(" ")}` : "";
      this.setStatus({
        phase: "done",
        message: `Wrote the model as plain formulas on the sheet ${SCORING_SHEET} (${out.columns} columns, probabilities under ${out.probabilityAt}); they need no add-in.${notes}`,
      });
      return out;
    } catch (e) {
      this.fail(e, "writing the scoring formulas");
      return null;
    }
  }

  // ---- review ------------------------------------------------------------------------------

  /** Key columns shown in the list: the identifier column (if any) and the first two numeric predictors. */
  keyColumns(): number[] {
    if (!this.data || !this.choice) return [];
    const keys: number[] = [];
    const id = keyColumn(this.data);
    if (id !== null) keys.push(id);
    for (const p of this.choice.predictors) {
      if (keys.length >= 3) break;
      const k = this.data.columns[p].kind;
      if ((k === "number" || k === "boolean") && !keys.includes(p)) keys.push(p);
    }
    return keys;
  }

  private refreshReview(): void {
    if (!this.data || !this.outcome || !this.choice) return;
    this.review = buildReview(this.data, this.outcome.scores, this.reviewSettings, this.keyColumns(), this.choice.level);
    this.emit("review");
  }

  /** Change threshold, band or the undecided test; the list refreshes at once (no refit needed). */
  async setReview(patch: Partial<ReviewSettings>): Promise<void> {
    const check = { ...this.reviewSettings, ...patch };
    if (!(check.band >= 0 && check.band <= 1) || !(check.threshold > 0 && check.threshold < 1)) {
      this.setStatus({
        phase: "failed",
        message: problem("BAD_OPTION_VALUE", {
          name: !(check.band >= 0 && check.band <= 1) ? "band" : "threshold",
          value: !(check.band >= 0 && check.band <= 1) ? check.band : check.threshold,
          expected: "The band lies between 0 and 1; the threshold strictly between 0 and 1.",
        }).message,
      });
      return;
    }
    this.reviewSettings = check;
    if (patch.threshold !== undefined && this.choice) this.choice = { ...this.choice, threshold: patch.threshold };
    if (this.outcome && this.choice) {
      // Probabilities do not depend on the threshold; only the predicted classes do.
      this.outcome = { ...this.outcome, scores: scoreRows(this.outcome.model, null, { threshold: check.threshold }) };
    }
    this.refreshReview();
    if (this.highlighted.length) await this.highlightAll();
  }

  /** Select a listed row in the sheet. */
  async selectRow(sheetRow: number): Promise<void> {
    if (!this.data) return;
    try {
      await this.port.selectRow(this.data.sheet, this.data.block.address, sheetRow);
    } catch (e) {
      this.fail(e, "selecting the row");
    }
  }

  /** Highlight every borderline row (not only the listed ones) in the data table. */
  async highlightAll(): Promise<void> {
    if (!this.data || !this.outcome) return;
    try {
      const rows = borderlineSheetRows(this.data, this.outcome.scores, this.reviewSettings);
      const stale = this.highlighted.filter((r) => !rows.includes(r));
      if (stale.length) await this.port.highlightRows(this.data.sheet, this.data.block.address, stale, false);
      await this.port.highlightRows(this.data.sheet, this.data.block.address, rows, true);
      this.highlighted = rows;
      this.emit("highlight");
    } catch (e) {
      this.fail(e, "highlighting rows");
    }
  }

  /** Remove the pane's highlight (only from the rows the pane highlighted). */
  async removeHighlight(): Promise<void> {
    if (!this.data || this.highlighted.length === 0) return;
    try {
      await this.port.highlightRows(this.data.sheet, this.data.block.address, this.highlighted, false);
      this.highlighted = [];
      this.emit("highlight");
    } catch (e) {
      this.fail(e, "removing the highlight");
    }
  }

  // ---- plot --------------------------------------------------------------------------------

  axisCandidates(): number[] {
    if (!this.data || !this.choice) return [];
    return axisCandidates(this.data, this.choice, this.derived);
  }

  /** The plot of two columns, or null without a usable fit. */
  plot(x: number, y: number): PlotModel | null {
    if (!this.data || !this.choice || !this.outcome || fitFailure(this.outcome.model)) return null;
    const model = this.outcome.model;
    const threshold = this.reviewSettings.threshold;
    return buildPlot(
      this.data,
      this.choice,
      this.outcome.scores,
      this.reviewSettings,
      x,
      y,
      this.derived,
      (cells: CellValue[][]) => scoreRows(model, cells, { threshold, headers: "yes" }),
    );
  }

  // ---- generated basis columns -------------------------------------------------------------

  /**
   * Remember basis columns the pane wrote (replacing a record for the same block), with how the plot
   * recomputes them. They then follow the table's rows on refresh.
   */
  trackBasis(basis: GeneratedBasis, derived: DerivedColumns): void {
    this.generated = [...this.generated.filter((g) => !sameBlock(g, basis)), basis];
    this.derived = [...this.derived.filter((d) => !sameNames(d.outputs, basis.names)), derived];
    this.emit("basis");
  }

  /** Forget basis columns (they were removed); returns the record as it stands, with its current extent. */
  untrackBasis(sheet: string, address: string): GeneratedBasis | null {
    const found = this.generated.find((g) => g.sheet === sheet && rectAddress(g.rect).split(":")[0] === address.split(":")[0]) ?? null;
    if (found) {
      this.generated = this.generated.filter((g) => g !== found);
      this.derived = this.derived.filter((d) => !sameNames(d.outputs, found.names));
      this.emit("basis");
    }
    return found;
  }

  /** Notes about generated basis columns (refreshed, or not refreshed and why), for the pane. */
  basisNotes(): BuilderMessage[] {
    return this.generated.flatMap((g) => (g.note ? [g.note] : []));
  }

  /**
   * Bring the generated basis columns in step with a re-read table: formulas follow a change of their
   * source rows' extent (rewritten over the new rows); values get a note when the rows changed or
   * their source cells were edited. Returns true when something was written (re-read the table).
   */
  private async followBasis(before: DataTable, after: DataTable): Promise<boolean> {
    let wrote = false;
    let changed = false;
    const next: GeneratedBasis[] = [];
    for (const g of this.generated) {
      // Only columns built from this table follow it (the table holds their source columns).
      const holds = g.sourceSheet === after.sheet && g.source.left >= after.rect.left && g.source.right <= after.rect.right && g.source.top >= after.rect.top;
      if (!holds) {
        next.push(g);
        continue;
      }
      const out = await followTableRows(this.port, g, after.block);
      if (out.status === "unchanged") {
        // Same rows: formulas recalculate by themselves; values go stale when their source cells change.
        if (g.mode === "values" && !g.note && sourceCellsChanged(g, before.block, after.block)) {
          next.push({ ...g, note: staleValuesNote(g) });
          changed = true;
        } else next.push(g);
        continue;
      }
      next.push(out.basis);
      changed = true;
      if (out.status === "rewritten") {
        wrote = true;
        this.derived = [...this.derived.filter((d) => !sameNames(d.outputs, out.previous.names)), basisDerived(out.basis.recipe, out.training)];
        if (!sameNames(out.previous.names, out.basis.names) && this.choice) {
          // The recipe now makes other columns (a new level, merged bins): tick them when the old ones were.
          const ticked = this.choice.predictors.some((p) => out.previous.names.includes(before.columns[p]?.name));
          if (ticked) this.pendingTicks.push(...out.basis.names);
        }
      }
    }
    this.generated = next;
    if (changed) this.emit("basis");
    return wrote;
  }

  // ---- refresh on change -------------------------------------------------------------------

  private scheduleRefresh(): void {
    if (this.refreshTimer) clearTimeout(this.refreshTimer);
    this.refreshTimer = setTimeout(() => {
      this.refreshTimer = null;
      void this.refresh();
    }, this.options.refreshDelayMs);
  }

  /**
   * Re-read the table after an edit and refit. Rows appended directly below the table or deleted
   * from its bottom change its extent (WorkbookPort.readGrownBlock; ports without it re-read the same
   * block). Edits inside the table keep the formulas, which recalculate themselves; a table whose rows
   * changed gets its formulas rewritten over the new ranges (explicit ranges rather than whole
   * columns: they carry only the table's cells, stay under the cell functions' payload limit, and key
   * the same shared fit as the pane's own cells). Generated basis formulas follow the new rows first
   * (followBasis), so the refit sees the new rows' basis values. A re-read that finds nothing changed
   * (e.g. the change event of the pane's own write) does nothing. Refreshes never overlap: a change
   * that arrives during one runs one more after it.
   */
  async refresh(): Promise<void> {
    if (this.refreshing) {
      this.refreshAgain = true;
      return this.refreshing;
    }
    const run = (async () => {
      do {
        this.refreshAgain = false;
        await this.refreshOnce();
      } while (this.refreshAgain);
    })();
    this.refreshing = run;
    try {
      await run;
    } finally {
      this.refreshing = null;
    }
  }

  private async refreshOnce(): Promise<void> {
    if (!this.data) return;
    try {
      const before = this.data;
      const address = rectAddress(before.rect);
      const read = (a: string) => (this.port.readGrownBlock ? this.port.readGrownBlock(before.sheet, a) : this.port.readBlock(before.sheet, a));
      let block = await read(address);
      if (sameBlockValues(before.block, block)) return;
      let data = describeBlock(block);
      if (this.generated.length && (await this.followBasis(before, data))) {
        // The rewritten basis formulas filled the new rows (and may be wider): read the table again.
        // A block beside the table that the table already spans may have grown wider (a new level).
        const spanned = this.generated.filter((g) => g.sheet === data.sheet && g.rect.left <= data.rect.right);
        const right = Math.max(data.rect.right, ...spanned.map((g) => g.rect.right));
        block = await this.port.readBlock(data.sheet, rectAddress({ ...data.rect, right }));
        data = describeBlock(block);
      }
      await this.adoptBlock(data, { listen: false, keepChoice: true });
      if (this.pendingTicks.length && this.choice && this.data) {
        const names = this.pendingTicks;
        this.pendingTicks = [];
        const add = this.data.columns.filter((c) => names.includes(c.name)).map((c) => c.index);
        this.setChoice({ predictors: [...new Set([...this.choice.predictors, ...add])].sort((a, b) => a - b) });
      }
      if (this.outcome) {
        const resized = tableReference(before) !== tableReference(this.data!);
        await this.fit(resized && this.layout !== null);
        if (this.highlighted.length) await this.highlightAll();
      }
    } catch (e) {
      this.fail(e, "refreshing after a change");
    }
  }

  dispose(): void {
    this.cancel();
    this.stopListening?.();
    if (this.refreshTimer) clearTimeout(this.refreshTimer);
    this.listeners.clear();
  }
}

function sameNames(a: readonly string[], b: readonly string[]): boolean {
  return a.length === b.length && a.every((n, i) => n === b[i]);
}

function sameBlock(a: GeneratedBasis, b: GeneratedBasis): boolean {
  return a.sheet === b.sheet && a.rect.top === b.rect.top && a.rect.left === b.rect.left;
}

/** Same address and the same cell values. */
function sameBlockValues(a: SheetBlock, b: SheetBlock): boolean {
  if (a.sheet !== b.sheet || a.address !== b.address || a.values.length !== b.values.length) return false;
  for (let i = 0; i < a.values.length; i++) {
    const x = a.values[i];
    const y = b.values[i];
    if (x.length !== y.length) return false;
    for (let j = 0; j < x.length; j++) if (x[j] !== y[j]) return false;
  }
  return true;
}
