/**
 * The task pane's screen: builds the sections in a container and keeps them in step with a
 * PaneController. Plain DOM, no framework. Every piece of workbook text (column names, class names,
 * cell values, messages) is put in with textContent or as an input's value, never as markup.
 *
 * Sections (top to bottom): cautions; 1 Data and model; 2 Basis columns; 3 Borderline rows;
 * 4 Boundary plot.
 */
import type { CellValue } from "../engine";
import type { BasisChange, BasisController, ColumnPick } from "./basisController";
import { CAUTIONS, CAUTIONS_TITLE } from "./cautions";
import type { PaneController, PaneChange } from "./paneController";
import { renderPlot } from "./plot";
import { h, numberInput } from "./dom";

function fmtNumber(v: number, digits = 3): string {
  if (!Number.isFinite(v)) return "";
  return v.toFixed(digits);
}

function cellText(v: CellValue): string {
  if (v === null || v === undefined) return "";
  if (typeof v === "number") return Number.isInteger(v) ? String(v) : String(Number(v.toPrecision(5)));
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  return String(v);
}

/** Per-column transforms offered by the basis section, with their main setting. */
const BASIS_CHOICES: { value: ColumnPick["transform"]; label: string; setting: string | null; initial: number }[] = [
  { value: "", label: "as is", setting: null, initial: 0 },
  { value: "ns", label: "natural spline", setting: "df", initial: 3 },
  { value: "poly", label: "polynomial", setting: "degree", initial: 2 },
  { value: "log", label: "log", setting: null, initial: 0 },
  { value: "z", label: "standardize", setting: null, initial: 0 },
  { value: "bins", label: "quantile bins", setting: "k", initial: 4 },
];

/**
 * Offer text as a file download: a Blob and an object URL on a temporary anchor, all in this page
 * (works offline; nothing is sent anywhere).
 */
function saveTextFile(name: string, text: string): void {
  const url = URL.createObjectURL(new Blob([text], { type: "application/json" }));
  const a = h("a", { href: url, download: name });
  a.style.display = "none";
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 0);
}

export class PaneView {
  readonly root: HTMLElement;
  /** The portable-model section; mountPane moves it below the evaluation section. */
  readonly portable: HTMLElement;
  private readonly el: Record<string, HTMLElement> = {};
  private plotAxes: { x: number; y: number } | null = null;

  constructor(
    container: HTMLElement,
    private readonly controller: PaneController,
    private readonly basis: BasisController,
  ) {
    this.root = h("div", { class: "osm-pane" });
    this.portable = this.portableSection();
    this.root.append(this.header(), this.cautions(), this.setupSection(), this.basisSection(), this.reviewSection(), this.plotSection(), this.portable);
    container.append(this.root);
    controller.subscribe((change) => this.update(change));
    basis.subscribe((change) => this.updateBasis(change));
    this.renderStatus();
  }

  private byId<T extends HTMLElement>(id: string): T {
    return this.el[id] as T;
  }

  private keep<T extends HTMLElement>(id: string, e: T): T {
    this.el[id] = e;
    return e;
  }

  // ---- building ----------------------------------------------------------------------------

  private header(): HTMLElement {
    return h("header", { class: "osm-head" }, h("h1", {}, "Oddsmith"), h("p", { class: "osm-tagline" }, "Classifier fits, borderline rows and the decision boundary"));
  }

  private cautions(): HTMLElement {
    return h(
      "aside",
      { class: "osm-cautions", id: "osm-cautions", "aria-label": CAUTIONS_TITLE },
      h("h2", {}, CAUTIONS_TITLE),
      h("ul", {}, ...CAUTIONS.map((c) => h("li", {}, c))),
    );
  }

  private section(id: string, step: string, title: string, ...children: Node[]): HTMLElement {
    return h("section", { class: "osm-section", id }, h("h2", {}, h("span", { class: "osm-step" }, step), title), ...children);
  }

  private setupSection(): HTMLElement {
    const use = this.keep("use", h("button", { id: "osm-use", type: "button", class: "osm-primary" }, "Use selection"));
    use.addEventListener("click", () => void this.controller.useSelection());
    const info = this.keep("tableInfo", h("p", { id: "osm-table-info", class: "osm-note" }, "No table chosen yet."));
    const label = this.keep("label", h("select", { id: "osm-label" }));
    label.addEventListener("change", () => this.controller.setChoice({ label: Number((label as HTMLSelectElement).value) }));
    const focus = this.keep("focus", h("select", { id: "osm-focus" }));
    focus.addEventListener("change", () => {
      const v = (focus as HTMLSelectElement).value;
      this.controller.setChoice({ focusClass: v === "" ? null : v });
    });
    const predictors = this.keep("predictors", h("div", { id: "osm-predictors", class: "osm-checks", role: "group", "aria-label": "Predictor columns" }));
    const penalty = this.keep("penalty", numberInput("osm-penalty", 0, { min: "0" }));
    const level = this.keep("level", numberInput("osm-level", 0.95, { min: "0.5", max: "0.999" }));
    const threshold = this.keep("threshold", numberInput("osm-threshold", 0.5, { min: "0.01", max: "0.99" }));
    const firth = this.keep("firth", h("input", { id: "osm-firth", type: "checkbox" }));
    const readOptions = () =>
      this.controller.setChoice({
        penalty: Number((penalty as HTMLInputElement).value),
        level: Number((level as HTMLInputElement).value),
        threshold: Number((threshold as HTMLInputElement).value),
        firth: (firth as HTMLInputElement).checked,
      });
    for (const i of [penalty, level, threshold, firth]) i.addEventListener("change", readOptions);
    const fit = this.keep("fit", h("button", { id: "osm-fit", type: "button", class: "osm-primary" }, "Fit and write formulas"));
    fit.addEventListener("click", () => void this.controller.fit(true));
    const cancel = this.keep("cancel", h("button", { id: "osm-cancel", type: "button" }, "Cancel"));
    cancel.addEventListener("click", () => this.controller.cancel());
    const progress = this.keep("progress", h("progress", { id: "osm-progress", max: "1" }));
    const status = this.keep("status", h("p", { id: "osm-status", role: "status", "aria-live": "polite" }));
    const diagnostics = this.keep("diagnostics", h("ul", { id: "osm-diagnostics", class: "osm-diagnostics" }));
    return this.section(
      "osm-setup",
      "1",
      "Data and model",
      h("div", { class: "osm-row" }, use),
      info,
      h("label", { class: "osm-field" }, h("span", {}, "Label column (the classes)"), label),
      h("label", { class: "osm-field" }, h("span", { id: "osm-focus-caption" }, "Class of interest"), focus),
      h("div", { class: "osm-field" }, h("span", {}, "Predictor columns"), predictors),
      h(
        "div",
        { class: "osm-grid3" },
        h("label", { class: "osm-field" }, h("span", {}, "Penalty (0 = none)"), penalty),
        h("label", { class: "osm-field" }, h("span", {}, "Interval level"), level),
        h("label", { class: "osm-field" }, h("span", {}, "Threshold"), threshold),
      ),
      h("label", { class: "osm-inline" }, firth, " Bias-reduced fit (Firth), for separated classes"),
      h("div", { class: "osm-row" }, fit, cancel),
      progress,
      status,
      diagnostics,
    );
  }

  private basisSection(): HTMLElement {
    const columns = this.keep("basisColumns", h("div", { id: "osm-basis-columns", class: "osm-basis-columns" }));
    const recipe = this.keep("recipe", h("input", { id: "osm-recipe", type: "text", spellcheck: "false", placeholder: "firmness: ns(3)" }));
    recipe.addEventListener("input", () => this.basis.preview((recipe as HTMLInputElement).value));
    const preview = this.keep("basisPreview", h("p", { id: "osm-basis-preview", class: "osm-note" }));
    const write = this.keep("basisWrite", h("button", { id: "osm-basis-write", type: "button" }, "Add beside the data"));
    write.addEventListener("click", () => {
      const mode = (this.byId("basisValues") as HTMLInputElement).checked ? "values" : "formula";
      void this.basis.write((this.byId("recipe") as HTMLInputElement).value, mode);
    });
    const undo = this.keep("basisUndo", h("button", { id: "osm-basis-undo", type: "button" }, "Remove generated columns"));
    undo.addEventListener("click", () => void this.basis.remove());
    const asValues = this.keep("basisValues", h("input", { id: "osm-basis-values", type: "checkbox" }));
    const notes = this.keep("basisNotes", h("ul", { id: "osm-basis-notes", class: "osm-basis-notes" }));
    return this.section(
      "osm-basis",
      "2",
      "Basis columns",
      h("p", { class: "osm-note" }, "Give a column a curved effect: the new columns are written beside the table as one live formula and ticked as predictors in place of their source."),
      columns,
      h("label", { class: "osm-field" }, h("span", {}, "Recipe"), recipe),
      h("label", { class: "osm-inline" }, asValues, " Write fixed values instead of a live formula (values do not follow new rows)"),
      preview,
      h("div", { class: "osm-row" }, write, undo),
      notes,
    );
  }

  private reviewSection(): HTMLElement {
    const threshold = this.keep("reviewThreshold", numberInput("osm-review-threshold", 0.5, { min: "0.01", max: "0.99" }));
    const band = this.keep("band", numberInput("osm-band", 0.1, { min: "0", max: "1", step: "0.01" }));
    const undecided = this.keep("undecided", h("input", { id: "osm-undecided", type: "checkbox" }));
    (undecided as HTMLInputElement).checked = true;
    const apply = () =>
      void this.controller.setReview({
        threshold: Number((threshold as HTMLInputElement).value),
        band: Number((band as HTMLInputElement).value),
        undecided: (undecided as HTMLInputElement).checked,
      });
    for (const i of [threshold, band, undecided]) i.addEventListener("change", apply);
    const summary = this.keep("reviewSummary", h("p", { id: "osm-review-summary", class: "osm-note" }, "Fit a model to list the rows near its decision boundary."));
    const highlight = this.keep("highlight", h("button", { id: "osm-highlight", type: "button" }, "Highlight all in the sheet"));
    highlight.addEventListener("click", () => void this.controller.highlightAll());
    const unhighlight = this.keep("unhighlight", h("button", { id: "osm-unhighlight", type: "button" }, "Remove highlight"));
    unhighlight.addEventListener("click", () => void this.controller.removeHighlight());
    const table = this.keep("reviewTable", h("table", { id: "osm-review-table", class: "osm-review-table" }));
    table.addEventListener("click", (e) => {
      const tr = (e.target as HTMLElement).closest("tr[data-sheet-row]") as HTMLElement | null;
      if (tr) void this.controller.selectRow(Number(tr.dataset.sheetRow));
    });
    table.addEventListener("keydown", (e) => {
      const tr = (e.target as HTMLElement).closest("tr[data-sheet-row]") as HTMLElement | null;
      if (tr && (e.key === "Enter" || e.key === " ")) {
        e.preventDefault();
        void this.controller.selectRow(Number(tr.dataset.sheetRow));
      }
    });
    return this.section(
      "osm-review",
      "3",
      "Borderline rows",
      h(
        "div",
        { class: "osm-grid3" },
        h("label", { class: "osm-field" }, h("span", {}, "Threshold"), threshold),
        h("label", { class: "osm-field" }, h("span", {}, "Band (±)"), band),
      ),
      h("label", { class: "osm-inline" }, undecided, " Also rows whose probability interval contains the threshold"),
      summary,
      h("div", { class: "osm-row" }, highlight, unhighlight),
      h("div", { class: "osm-table-wrap" }, table),
    );
  }

  private plotSection(): HTMLElement {
    const x = this.keep("plotX", h("select", { id: "osm-plot-x" }));
    const y = this.keep("plotY", h("select", { id: "osm-plot-y" }));
    const change = () => {
      this.plotAxes = { x: Number((x as HTMLSelectElement).value), y: Number((y as HTMLSelectElement).value) };
      this.renderPlotArea();
    };
    x.addEventListener("change", change);
    y.addEventListener("change", change);
    const area = this.keep("plotArea", h("div", { id: "osm-plot-area", class: "osm-plot-area" }));
    const legend = this.keep("plotLegend", h("ul", { id: "osm-plot-legend", class: "osm-legend" }));
    const caption = this.keep("plotCaption", h("p", { id: "osm-plot-caption", class: "osm-note" }, "Fit a model to draw its decision boundary."));
    return this.section(
      "osm-plot",
      "4",
      "Boundary plot",
      h(
        "div",
        { class: "osm-grid3" },
        h("label", { class: "osm-field" }, h("span", {}, "Across"), x),
        h("label", { class: "osm-field" }, h("span", {}, "Up"), y),
      ),
      area,
      legend,
      caption,
    );
  }

  private portableSection(): HTMLElement {
    const keep = this.keep("keepModel", h("button", { id: "osm-keep-model", type: "button" }, "Keep the model in the workbook"));
    const said = this.keep("portableStatus", h("p", { id: "osm-portable-status", class: "osm-note", role: "status", "aria-live": "polite" }));
    // The outcome is said here too, beside the buttons (the pane's status line is far above).
    const tell = () => {
      said.textContent = this.controller.status.message;
      said.className = `osm-note osm-status is-${this.controller.status.phase}`;
    };
    keep.addEventListener("click", () => void this.controller.keepModel().then(tell));
    const download = this.keep("downloadModel", h("button", { id: "osm-download-model", type: "button" }, "Download the description"));
    download.addEventListener("click", () => {
      const file = this.controller.descriptionDownload();
      if (file) saveTextFile(file.name, file.text);
      tell();
    });
    const formulas = this.keep("scoringFormulas", h("button", { id: "osm-scoring-formulas", type: "button" }, "Write scoring formulas"));
    formulas.addEventListener("click", () => void this.controller.writeScoringFormulas().then(tell));
    return this.section(
      "osm-portable",
      "6",
      "Portable model",
      h(
        "p",
        { class: "osm-note" },
        "Keep the fitted model inside the workbook (it is saved with it and scored by =ODDS.KEPT without refitting), save its description as a file, or write it as plain formulas that need no add-in. The description holds coefficients and a summary of the data (counts, ranges, means, level counts), no data rows.",
      ),
      h("div", { class: "osm-row" }, keep, download, formulas),
      said,
    );
  }

  // ---- updating ----------------------------------------------------------------------------

  private update(change: PaneChange): void {
    switch (change) {
      case "status":
        this.renderStatus();
        break;
      case "data":
        this.renderTableInfo();
        break;
      case "choice":
        this.renderChoice();
        break;
      case "fit":
        this.renderDiagnostics();
        this.renderAxes();
        this.renderPlotArea();
        break;
      case "review":
        this.renderReview();
        this.renderPlotArea();
        break;
      case "highlight":
        this.renderReview();
        break;
      case "basis":
        this.renderBasisNotes();
        break;
    }
  }

  private renderStatus(): void {
    const s = this.controller.status;
    const status = this.byId("status");
    status.textContent = s.message;
    status.className = `osm-status is-${s.phase}`;
    const progress = this.byId<HTMLProgressElement>("progress");
    progress.hidden = !s.busy;
    if (s.progress === null) progress.removeAttribute("value");
    else progress.value = s.progress;
    (this.byId("cancel") as HTMLButtonElement).disabled = !s.busy;
    (this.byId("fit") as HTMLButtonElement).disabled = s.busy || !this.controller.data;
    const noModel = s.busy || !this.controller.outcome;
    for (const id of ["keepModel", "downloadModel", "scoringFormulas"]) (this.byId(id) as HTMLButtonElement).disabled = noModel;
  }

  private renderTableInfo(): void {
    const d = this.controller.data;
    this.byId("tableInfo").textContent = d
      ? `${d.sheet}!${d.block.address} · ${d.table.rows.toLocaleString("en-US")} rows · ${d.columns.length} columns${d.table.header ? "" : " (no header row found: columns are named x1, x2, ...)"}`
      : "No table chosen yet.";
    this.renderStatus();
  }

  private renderChoice(): void {
    const d = this.controller.data;
    const c = this.controller.choice;
    if (!d || !c) return;
    const label = this.byId<HTMLSelectElement>("label");
    label.replaceChildren(
      ...d.columns
        .filter((col) => col.kind !== "empty")
        .map((col) => {
          const o = h("option", { value: String(col.index) }, col.name);
          o.selected = col.index === c.label;
          return o;
        }),
    );
    const classes = this.controller.labelClasses();
    const focus = this.byId<HTMLSelectElement>("focus");
    const caption = this.root.querySelector("#osm-focus-caption");
    if (caption) caption.textContent = classes.length > 2 ? "Reference class" : "Positive class";
    const auto = h("option", { value: "" }, "(automatic)");
    focus.replaceChildren(
      auto,
      ...classes.map((k) => {
        const o = h("option", { value: k }, k);
        o.selected = k === c.focusClass;
        return o;
      }),
    );
    auto.selected = c.focusClass === null;
    const box = this.byId("predictors");
    box.replaceChildren(
      ...d.columns
        .filter((col) => col.index !== c.label && col.kind !== "empty")
        .map((col) => {
          const input = h("input", { type: "checkbox", value: String(col.index), "data-name": col.name });
          input.checked = c.predictors.includes(col.index);
          input.addEventListener("change", () => {
            const picked = [...box.querySelectorAll<HTMLInputElement>("input:checked")].map((i) => Number(i.value)).sort((a, b) => a - b);
            this.controller.setChoice({ predictors: picked });
          });
          return h("label", { class: "osm-check" }, input, ` ${col.name}`, h("span", { class: "osm-kind" }, col.kind === "text" ? " (categories)" : ""));
        }),
    );
    (this.byId("penalty") as HTMLInputElement).value = String(c.penalty);
    (this.byId("level") as HTMLInputElement).value = String(c.level);
    (this.byId("threshold") as HTMLInputElement).value = String(c.threshold);
    (this.byId("reviewThreshold") as HTMLInputElement).value = String(this.controller.reviewSettings.threshold);
    (this.byId("firth") as HTMLInputElement).checked = c.firth;
    this.renderStatus();
  }

  private renderDiagnostics(): void {
    const list = this.byId("diagnostics");
    list.replaceChildren(
      ...this.controller.diagnostics.map((d) => h("li", { class: `osm-diag is-${d.severity}` }, h("strong", {}, `${d.severity}: `), d.message)),
    );
  }

  private renderReview(): void {
    const r = this.controller.review;
    const table = this.byId("reviewTable");
    const summary = this.byId("reviewSummary");
    if (!r) {
      summary.textContent = "Fit a model to list the rows near its decision boundary.";
      table.replaceChildren();
      return;
    }
    const highlighted = new Set(this.controller.highlighted);
    // The threshold may have been moved from elsewhere (the evaluation section's chooser).
    (this.byId("reviewThreshold") as HTMLInputElement).value = String(this.controller.reviewSettings.threshold);
    const multi = r.review.kind === "multiclass";
    // The threshold and the interval test apply to two classes only.
    (this.byId("reviewThreshold") as HTMLInputElement).disabled = multi;
    (this.byId("undecided") as HTMLInputElement).disabled = multi;
    summary.textContent = r.summary + (highlighted.size ? ` ${highlighted.size} rows are highlighted in the sheet.` : "");
    const head = h(
      "thead",
      {},
      h("tr", {}, h("th", { scope: "col" }, "Row"), ...r.keyNames.map((k) => h("th", { scope: "col" }, k)), h("th", { scope: "col" }, r.probabilityLabel), h("th", { scope: "col" }, "Margin"), multi
          ? h("th", { scope: "col", title: "most likely class / runner-up" }, "Between")
          : h("th", { scope: "col", title: "band: within the band of the threshold; interval: its probability interval contains the threshold" }, "Why")),
    );
    const body = h("tbody");
    for (const line of r.lines) {
      // Two classes: "band" = within the band; "interval" = its probability interval contains the
      // threshold. Several classes: the two classes that compete.
      const why = multi
        ? `${line.predicted} / ${line.runnerUp}`
        : [line.withinBand ? "band" : "", line.undecided ? "interval" : ""].filter(Boolean).join(" + ");
      const tr = h(
        "tr",
        { "data-sheet-row": String(line.sheetRow), tabindex: "0", title: `Select row ${line.sheetRow} in the sheet` },
        h("td", { class: "osm-num" }, String(line.sheetRow)),
        ...line.keys.map((k) => h("td", {}, cellText(k))),
        h("td", { class: "osm-num" }, fmtNumber(line.probability)),
        h("td", { class: "osm-num" }, fmtNumber(line.margin)),
        h("td", {}, why),
      );
      if (highlighted.has(line.sheetRow)) tr.classList.add("is-highlighted");
      if (line.undecided && !line.withinBand) tr.classList.add("is-undecided");
      body.append(tr);
    }
    table.replaceChildren(head, body);
  }

  private renderAxes(): void {
    const d = this.controller.data;
    const candidates = this.controller.axisCandidates();
    const x = this.byId<HTMLSelectElement>("plotX");
    const y = this.byId<HTMLSelectElement>("plotY");
    if (!d || candidates.length < 2) {
      x.replaceChildren();
      y.replaceChildren();
      this.plotAxes = null;
      return;
    }
    if (!this.plotAxes || !candidates.includes(this.plotAxes.x) || !candidates.includes(this.plotAxes.y)) {
      this.plotAxes = { x: candidates[0], y: candidates[1] };
    }
    const fill = (select: HTMLSelectElement, chosen: number) =>
      select.replaceChildren(
        ...candidates.map((i) => {
          const o = h("option", { value: String(i) }, d.columns[i].name);
          o.selected = i === chosen;
          return o;
        }),
      );
    fill(x, this.plotAxes.x);
    fill(y, this.plotAxes.y);
  }

  private renderPlotArea(): void {
    const area = this.byId("plotArea");
    const caption = this.byId("plotCaption");
    const legend = this.byId("plotLegend");
    if (!this.plotAxes || !this.controller.outcome) {
      area.replaceChildren();
      legend.replaceChildren();
      caption.textContent = this.controller.outcome
        ? "The plot needs two numeric predictor columns."
        : "Fit a model to draw its decision boundary.";
      return;
    }
    if (this.plotAxes.x === this.plotAxes.y) {
      area.replaceChildren();
      caption.textContent = "Choose two different columns.";
      return;
    }
    let model;
    try {
      model = this.controller.plot(this.plotAxes.x, this.plotAxes.y);
    } catch {
      model = null;
    }
    if (!model) {
      area.replaceChildren();
      caption.textContent = "The plot could not be drawn for this fit.";
      return;
    }
    renderPlot(area, model);
    legend.replaceChildren(
      ...model.classes.map((k, i) => h("li", { class: `osm-legend-item is-class-${i % 6}` }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), k)),
      h("li", { class: "osm-legend-item is-ring" }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), "borderline row"),
      h("li", { class: "osm-legend-item is-line" }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), model.kind === "binary" ? `boundary where p = ${this.controller.reviewSettings.threshold}` : "boundaries between the most likely classes"),
    );
    const held = model.heldAt.map((hd) => `${hd.name} = ${hd.value} (${hd.rule})`).join(", ");
    caption.textContent = [
      `Each point is a row, by its actual class; shaded areas show where the model predicts each class.`,
      held ? `Other predictors held at: ${held}.` : "",
      ...model.notes,
    ]
      .filter(Boolean)
      .join(" ");
  }

  // ---- basis columns -----------------------------------------------------------------------

  private updateBasis(change: BasisChange): void {
    if (change === "source") this.renderBasisColumns();
    else {
      const out = this.byId("basisPreview");
      out.textContent = this.basis.line.text;
      out.className = this.basis.line.error ? "osm-note is-error" : "osm-note";
    }
  }

  /** One row per number column of the table: a transform and its main setting. */
  private renderBasisColumns(): void {
    const box = this.byId("basisColumns");
    if (this.basis.sourceProblem !== null) {
      box.replaceChildren(h("p", { class: "osm-note" }, this.basis.sourceProblem));
      return;
    }
    box.replaceChildren(
      ...this.basis.numericColumns().map((s) => {
        const select = h("select", { "data-column": s.name, "aria-label": `Transform of ${s.name}` });
        for (const c of BASIS_CHOICES) select.append(h("option", { value: c.value }, c.label));
        const setting = numberInput("", 3, { "data-setting-for": s.name, min: "1", max: "20", step: "1", "aria-label": `Setting for ${s.name}` });
        setting.removeAttribute("id");
        setting.hidden = true;
        select.addEventListener("change", () => {
          const c = BASIS_CHOICES.find((b) => b.value === select.value)!;
          setting.hidden = c.setting === null;
          setting.value = String(c.initial);
          this.composeRecipe();
        });
        setting.addEventListener("change", () => this.composeRecipe());
        return h("div", { class: "osm-basis-row" }, h("span", { class: "osm-basis-name" }, s.name), select, setting);
      }),
    );
  }

  /** The recipe of the picked transforms, into the recipe box (then previewed). */
  private composeRecipe(): void {
    const picks: ColumnPick[] = [];
    for (const row of this.byId("basisColumns").querySelectorAll(".osm-basis-row")) {
      const select = row.querySelector("select") as HTMLSelectElement;
      const input = row.querySelector("input") as HTMLInputElement;
      const choice = BASIS_CHOICES.find((b) => b.value === select.value);
      if (!choice) continue;
      picks.push({ column: select.dataset.column!, transform: choice.value, setting: choice.setting, value: Number(input.value) });
    }
    const recipe = this.basis.recipeOf(picks);
    (this.byId("recipe") as HTMLInputElement).value = recipe;
    this.basis.preview(recipe);
  }

  /** What the pane has to say about generated columns after the table changed (followed, or not and why). */
  private renderBasisNotes(): void {
    const list = this.byId("basisNotes");
    list.replaceChildren(
      ...this.controller.basisNotes().map((n) =>
        h("li", { class: n.code === "BASIS_FOLLOWED_ROWS" ? "osm-note" : "osm-note is-error", "data-code": n.code }, n.message),
      ),
    );
  }
}
