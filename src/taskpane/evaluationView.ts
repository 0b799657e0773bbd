/**
 * The evaluation section of the task pane ("5 Check and decide"): the ROC curve, the calibration
 * plot by groups, the threshold chooser that moves the boundary review's threshold, and the
 * cross-validation path. Plain DOM kept in step with an EvaluationController; every piece of
 * workbook text goes in with textContent. Mounted under the pane's other sections by pane.ts.
 */
import { CALIBRATION_GROUPING_RULE } from "../engine";
import { renderCalibrationChart, renderPathChart, renderRocChart } from "./evaluationCharts";
import {
  type EvaluationChange,
  type EvaluationController,
  logSpacedPenalties,
  MIN_SPLIT_ROWS,
  SPLIT_CALIBRATION_GROUPS,
  type ThresholdGoal,
} from "./evaluationController";
import { buildCalibrationChart, buildPathChart, buildRocChart, steppedThreshold, thresholdNearPixel } from "./evaluationGeometry";
import { EVALUATION_CAUTIONS } from "./cautions";
import { type Attrs, h, numberInput } from "./dom";

/** A number for a caption: 3 decimals, or "n/a" when undefined. */
function f3(v: number): string {
  return Number.isFinite(v) ? v.toFixed(3) : "n/a";
}

function pct(level: number): string {
  return `${Math.round(level * 1000) / 10}%`;
}

/** The threshold chooser's ways of choosing, with the setting each one asks for. */
const GOALS: { value: ThresholdGoal["kind"]; label: string; setting: string; initial: number; attrs: Attrs }[] = [
  { value: "cost", label: "Cost ratio of errors", setting: "Cost of a false positive ÷ cost of a false negative", initial: 1, attrs: { min: "0.001" } },
  { value: "sensitivity", label: "Target sensitivity", setting: "Target sensitivity", initial: 0.9, attrs: { min: "0.01", max: "1", step: "0.01" } },
  { value: "budget", label: "Review budget (top rows)", setting: "Rows to review", initial: 20, attrs: { min: "1", step: "1" } },
  { value: "direct", label: "Typed threshold", setting: "Threshold", initial: 0.5, attrs: { min: "0.01", max: "0.99", step: "0.01" } },
];

export class EvaluationView {
  readonly root: HTMLElement;
  private readonly el: Record<string, HTMLElement> = {};

  constructor(
    container: HTMLElement,
    private readonly controller: EvaluationController,
  ) {
    this.root = this.section();
    container.append(this.root);
    controller.subscribe((change) => this.update(change));
    this.renderEvaluation();
    this.renderPath();
    this.renderStatus();
  }

  private keep<T extends HTMLElement>(id: string, e: T): T {
    this.el[id] = e;
    return e;
  }

  private byId<T extends HTMLElement>(id: string): T {
    return this.el[id] as T;
  }

  // ---- building ----------------------------------------------------------------------------------

  private section(): HTMLElement {
    return h(
      "section",
      { class: "osm-section osm-eval", id: "osm-eval" },
      h("h2", {}, h("span", { class: "osm-step" }, "5"), "Check and decide"),
      h("ul", { class: "osm-eval-cautions", id: "osm-eval-cautions" }, ...EVALUATION_CAUTIONS.map((c) => h("li", {}, c))),
      this.sourcePicker(),
      this.keep("unavailable", h("p", { id: "osm-eval-unavailable", class: "osm-note" })),
      h("h3", {}, "ROC curve"),
      this.rocArea(),
      this.keep("rocCaption", h("p", { id: "osm-roc-caption", class: "osm-note" })),
      h("h3", {}, "Calibration by groups"),
      this.splitPicker(),
      this.keep("calibration", h("div", { id: "osm-calibration", class: "osm-eval-chart" })),
      this.keep("calibrationLegend", h("ul", { id: "osm-calibration-legend", class: "osm-legend" })),
      this.keep("calibrationCaption", h("p", { id: "osm-calibration-caption", class: "osm-note" })),
      h("details", { class: "osm-note" }, h("summary", {}, "How the groups are cut"), CALIBRATION_GROUPING_RULE),
      this.thresholdChooser(),
      this.pathPanel(),
    );
  }

  private sourcePicker(): HTMLElement {
    const fitted = h("input", { type: "radio", name: "osm-eval-source", id: "osm-source-fitted", value: "fitted" });
    fitted.checked = true;
    const oof = this.keep("sourceOof", h("input", { type: "radio", name: "osm-eval-source", id: "osm-source-oof", value: "oof" }));
    const change = () => this.controller.setSource((oof as HTMLInputElement).checked);
    fitted.addEventListener("change", change);
    oof.addEventListener("change", change);
    return h(
      "div",
      { class: "osm-field", role: "radiogroup", "aria-label": "Probabilities checked", ...(this.controller.canRunPath ? {} : { hidden: "" }) },
      h("span", {}, "Probabilities checked"),
      h("label", { class: "osm-inline" }, fitted, " Fitted rows (in-sample: flatters the model)"),
      h("label", { class: "osm-inline" }, oof, " Out-of-fold (after cross-validation, below)"),
    );
  }

  /** The ROC chart's area: a click on the curve moves the review's threshold to that point. */
  private rocArea(): HTMLElement {
    const area = this.keep(
      "roc",
      h("div", {
        id: "osm-roc",
        class: "osm-eval-chart is-clickable",
        tabindex: "0",
        title: "Click a point of the curve (or use the arrow keys) to move the review threshold there",
      }),
    );
    area.addEventListener("keydown", (event) => {
      const ev = this.controller.evaluation;
      const step = event.key === "ArrowRight" || event.key === "ArrowUp" ? 1 : event.key === "ArrowLeft" || event.key === "ArrowDown" ? -1 : 0;
      if (ev.kind !== "binary" || step === 0) return;
      event.preventDefault();
      const t = steppedThreshold(ev.curve, ev.threshold, step);
      if (t !== null) void this.controller.chooseThreshold({ kind: "direct", value: t });
    });
    area.addEventListener("click", (event) => {
      const ev = this.controller.evaluation;
      const svgEl = area.querySelector("svg");
      const ctm = svgEl?.getScreenCTM();
      if (ev.kind !== "binary" || !svgEl || !ctm) return;
      const at = new DOMPoint(event.clientX, event.clientY).matrixTransform(ctm.inverse());
      const t = thresholdNearPixel(ev.curve, at.x, at.y);
      if (t !== null) void this.controller.chooseThreshold({ kind: "direct", value: t });
    });
    return area;
  }

  private splitPicker(): HTMLElement {
    const select = this.keep("split", h("select", { id: "osm-cal-split" }));
    select.addEventListener("change", () => {
      const v = (select as HTMLSelectElement).value;
      this.controller.setSplit(v === "" ? null : Number(v));
    });
    return h("label", { class: "osm-field" }, h("span", {}, "One line per value of"), select);
  }

  private renderSplitPicker(): void {
    const select = this.byId<HTMLSelectElement>("split");
    const data = this.controller.paneData();
    const none = h("option", { value: "" }, "(all rows together)");
    const options = this.controller.splitCandidates().map((i) => {
      const o = h("option", { value: String(i) }, data?.columns[i].name ?? "");
      o.selected = i === this.controller.splitColumn;
      return o;
    });
    none.selected = this.controller.splitColumn === null;
    select.replaceChildren(none, ...options);
  }

  private thresholdChooser(): HTMLElement {
    // Without the engine's threshold choice the threshold is typed (or clicked on the ROC curve).
    const goals = this.controller.canChooseByGoal ? GOALS : GOALS.filter((g) => g.value === "direct");
    const goal = this.keep("goal", h("select", { id: "osm-goal" }, ...goals.map((g) => h("option", { value: g.value }, g.label))));
    const caption = this.keep("goalCaption", h("span", { id: "osm-goal-caption" }, goals[0].setting));
    const value = this.keep("goalValue", numberInput("osm-goal-value", goals[0].initial, goals[0].attrs));
    goal.addEventListener("change", () => {
      const g = GOALS.find((x) => x.value === (goal as HTMLSelectElement).value)!;
      caption.textContent = g.setting;
      for (const a of ["min", "max", "step"]) value.removeAttribute(a);
      for (const [k, v] of Object.entries({ step: "any", ...g.attrs })) value.setAttribute(k, v);
      (value as HTMLInputElement).value = String(g.initial);
    });
    const apply = this.keep("goalApply", h("button", { id: "osm-goal-apply", type: "button", class: "osm-primary" }, "Move the review threshold"));
    apply.addEventListener("click", () =>
      void this.controller.chooseThreshold({ kind: (goal as HTMLSelectElement).value as ThresholdGoal["kind"], value: Number((value as HTMLInputElement).value) }),
    );
    return h(
      "div",
      { class: "osm-eval-block", id: "osm-threshold-chooser" },
      h("h3", {}, "Threshold"),
      h("label", { class: "osm-field" }, h("span", {}, "Choose it by"), goal),
      h("label", { class: "osm-field" }, caption, value),
      h("div", { class: "osm-row" }, apply),
      this.keep("thresholdNow", h("p", { id: "osm-threshold-now", class: "osm-eval-counts" })),
      this.keep("chooserNote", h("p", { id: "osm-chooser-note", class: "osm-note" })),
    );
  }

  private pathPanel(): HTMLElement {
    const folds = this.keep("folds", numberInput("osm-cv-folds", 5, { min: "2", max: "20", step: "1" }));
    const seed = this.keep("seed", numberInput("osm-cv-seed", 1, { min: "0", step: "1" }));
    const from = this.keep("from", numberInput("osm-cv-from", 0.001, { min: "0" }));
    const to = this.keep("to", numberInput("osm-cv-to", 100, { min: "0" }));
    const count = this.keep("count", numberInput("osm-cv-count", 11, { min: "2", max: "30", step: "1" }));
    const run = this.keep("run", h("button", { id: "osm-cv-run", type: "button", class: "osm-primary" }, "Run cross-validation"));
    run.addEventListener("click", () => {
      try {
        const penalties = logSpacedPenalties(Number((from as HTMLInputElement).value), Number((to as HTMLInputElement).value), Number((count as HTMLInputElement).value));
        void this.controller.runPath({ folds: Number((folds as HTMLInputElement).value), seed: Number((seed as HTMLInputElement).value), penalties });
      } catch (e) {
        this.byId("cvStatus").textContent = e instanceof Error ? e.message : String(e);
      }
    });
    const cancel = this.keep("cvCancel", h("button", { id: "osm-cv-cancel", type: "button" }, "Cancel"));
    cancel.addEventListener("click", () => this.controller.cancelPath());
    const adopt = this.keep("adopt", h("button", { id: "osm-cv-adopt", type: "button" }, "Use the one-SE penalty in the set-up"));
    adopt.addEventListener("click", () => this.controller.adoptPathPenalty());
    const controls: Attrs = this.controller.canRunPath ? {} : { hidden: "" };
    // Shown when this build can run a path, or when a path is at hand (renderPath).
    return this.keep(
      "cvBlock",
      h(
        "div",
        { class: "osm-eval-block", id: "osm-cv" },
        h("h3", {}, "Cross-validation path"),
        h(
          "div",
          { class: "osm-grid3", ...controls },
          h("label", { class: "osm-field" }, h("span", {}, "Folds"), folds),
          h("label", { class: "osm-field" }, h("span", {}, "Seed"), seed),
          h("label", { class: "osm-field" }, h("span", {}, "Penalties"), count),
          h("label", { class: "osm-field" }, h("span", {}, "From"), from),
          h("label", { class: "osm-field" }, h("span", {}, "To"), to),
        ),
        h("div", { class: "osm-row", ...controls }, run, cancel),
        this.keep("cvProgress", h("progress", { id: "osm-cv-progress", max: "1" })),
        this.keep("cvStatus", h("p", { id: "osm-cv-status", role: "status", "aria-live": "polite", class: "osm-status" })),
        this.keep("path", h("div", { id: "osm-cv-chart", class: "osm-eval-chart" })),
        this.keep("pathLegend", h("ul", { id: "osm-cv-legend", class: "osm-legend" })),
        this.keep("pathCaption", h("p", { id: "osm-cv-caption", class: "osm-note" })),
        h("div", { class: "osm-row" }, adopt),
      ),
    );
  }

  // ---- updating ----------------------------------------------------------------------------------

  private update(change: EvaluationChange): void {
    if (change === "evaluation" || change === "threshold") this.renderEvaluation();
    else if (change === "path") this.renderPath();
    else if (change === "status") this.renderStatus();
  }

  private renderEvaluation(): void {
    const ev = this.controller.evaluation;
    const unavailable = this.byId("unavailable");
    const charts = ["roc", "calibration"].map((k) => this.byId(k));
    if (ev.kind !== "binary") {
      unavailable.textContent = ev.message;
      unavailable.hidden = false;
      for (const c of charts) c.replaceChildren();
      for (const k of ["rocCaption", "calibrationCaption", "thresholdNow"]) this.byId(k).textContent = "";
      this.byId("calibrationLegend").replaceChildren();
      (this.byId("goalApply") as HTMLButtonElement).disabled = true;
      return;
    }
    unavailable.hidden = true;
    (this.byId("goalApply") as HTMLButtonElement).disabled = false;
    const where = ev.source === "out-of-fold" ? "rows, out-of-fold probabilities" : "fitted rows (in-sample)";
    const a = ev.auc;
    renderRocChart(this.byId("roc"), buildRocChart(ev.curve, a, ev.threshold));
    this.byId("rocCaption").textContent =
      `AUC ${f3(a.auc)} (${pct(a.level)} DeLong interval ${f3(a.lower)} to ${f3(a.upper)}), ${ev.rows.toLocaleString("en-US")} ${where}, ` +
      `positive class "${ev.positiveClass}". The orange dot is the review threshold ${ev.threshold} (click the curve, or focus it and use the arrow keys, to move it); the dashed line is a model that ranks at random.`;
    this.renderSplitPicker();
    const split = ev.split;
    const series = split ? split.series.map((x) => ({ name: x.name, rows: x.rows, groups: x.table.groups })) : [];
    renderCalibrationChart(this.byId("calibration"), buildCalibrationChart(ev.calibration.groups, undefined, series));
    this.byId("calibrationLegend").replaceChildren(
      ...series.map((x, k) => h("li", { class: `osm-legend-item is-class-${k % 6}` }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), `${x.name} (${x.rows} rows)`)),
    );
    const s = ev.slope;
    this.byId("calibrationCaption").textContent =
      `Calibration slope ${f3(s.slope.estimate)} (${pct(s.level)} interval ${f3(s.slope.lower)} to ${f3(s.slope.upper)}; 1 is ideal, below 1 means too extreme), ` +
      `intercept with slope ${f3(s.interceptWithSlope.estimate)}, calibration-in-the-large ${f3(s.intercept.estimate)} (${f3(s.intercept.lower)} to ${f3(s.intercept.upper)}; 0 is ideal). ` +
      `${ev.calibration.groups.length} groups of ${ev.rows.toLocaleString("en-US")} ${where} by predicted probability; dot size shows the group's rows; the dashed line is observed = predicted.` +
      (split
        ? ` Lines per value of ${split.column}, ${SPLIT_CALIBRATION_GROUPS} groups each${split.tooSmall.length ? `; not drawn (under ${MIN_SPLIT_ROWS} rows): ${split.tooSmall.join(", ")}` : ""}. A gap between lines is a statistical association in this data, not a cause.`
        : "") +
      (ev.source === "fitted rows" ? " On its own fitted rows an unpenalized fit has slope 1 and calibration-in-the-large 0 by construction: judge calibration on rows it was not fitted on." : "");
    const c = ev.counts;
    this.byId("thresholdNow").textContent =
      `Review threshold ${ev.threshold}: ${c.truePositives} true positives, ${c.falsePositives} false positives, ${c.trueNegatives} true negatives, ` +
      `${c.falseNegatives} false negatives; sensitivity ${f3(c.sensitivity)}, specificity ${f3(c.specificity)}, ${Math.round(c.truePositives + c.falsePositives)} rows flagged.`;
    this.byId("chooserNote").textContent = this.controller.chooserNote;
    (this.byId("sourceOof") as HTMLInputElement).disabled = !this.controller.path?.outOfFold;
  }

  private renderPath(): void {
    const path = this.controller.path;
    const area = this.byId("path");
    const legend = this.byId("pathLegend");
    (this.byId("sourceOof") as HTMLInputElement).disabled = !path?.outOfFold;
    (this.byId("adopt") as HTMLButtonElement).disabled = !path;
    this.byId("cvBlock").hidden = !this.controller.canRunPath && !path;
    if (!path) {
      area.replaceChildren();
      legend.replaceChildren();
      this.byId("pathCaption").textContent = "Run cross-validation to see out-of-fold log-loss across penalties.";
      return;
    }
    const chart = buildPathChart(path.entries, path.best, path.oneSe);
    renderPathChart(area, chart);
    const best = path.entries[path.best];
    const one = path.entries[path.oneSe];
    legend.replaceChildren(
      h("li", { class: "osm-legend-item is-best" }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), `lowest log-loss (penalty ${best.penalty})`),
      h("li", { class: "osm-legend-item is-onese" }, h("span", { class: "osm-swatch", "aria-hidden": "true" }), `one-SE choice (penalty ${one.penalty})`),
    );
    this.byId("pathCaption").textContent =
      `Mean out-of-fold log-loss over ${path.folds} folds (${path.rows.toLocaleString("en-US")} rows), bars ± one standard error across folds. ` +
      `The one-SE choice is the largest penalty whose log-loss is within one SE of the lowest (the dashed line).` +
      (chart.leftOut ? ` ${chart.leftOut} penalties of 0 or without a value are not drawn on the log axis.` : "");
  }

  private renderStatus(): void {
    const s = this.controller.status;
    const status = this.byId("cvStatus");
    status.textContent = s.message;
    status.className = `osm-status is-${s.phase}`;
    const progress = this.byId<HTMLProgressElement>("cvProgress");
    progress.hidden = !s.busy;
    if (s.progress === null) progress.removeAttribute("value");
    else progress.value = s.progress;
    (this.byId("cvCancel") as HTMLButtonElement).disabled = !s.busy;
    (this.byId("run") as HTMLButtonElement).disabled = s.busy;
  }
}
