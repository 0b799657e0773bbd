/**
 * Mount the task pane (controllers + views) into a container, against any WorkbookPort. Used by the
 * Office page (taskpane.ts, with the Excel port) and by the preview workbench (with the in-memory port).
 * Only the controllers get the port; the views render their state and pass on what the person does.
 * The evaluation section (evaluationController.ts / evaluationView.ts) goes under the pane's sections.
 */
import { BasisController } from "./basisController";
import { EvaluationController } from "./evaluationController";
import { pathCompute, thresholdChooser } from "./evaluationCompute";
import { AutoEvaluationRunner } from "./evaluationRunner";
import { EvaluationView } from "./evaluationView";
import { PaneController, type PaneOptions } from "./paneController";
import { PaneView } from "./paneView";
import type { WorkbookPort } from "./port";

export interface MountedPane {
  controller: PaneController;
  basis: BasisController;
  view: PaneView;
  evaluation: EvaluationController;
}

export interface MountOptions extends Omit<PaneOptions, "port"> {
  /** URL of the cross-validation worker script, or null where workers cannot run. */
  evaluationWorkerUrl?: string | null;
}

export function mountPane(container: HTMLElement, port: WorkbookPort, options: MountOptions = {}): MountedPane {
  const { evaluationWorkerUrl = null, ...paneOptions } = options;
  const controller = new PaneController({ port, ...paneOptions });
  const basis = new BasisController(controller, port);
  const view = new PaneView(container, controller, basis);
  const runner = pathCompute ? new AutoEvaluationRunner(pathCompute, evaluationWorkerUrl, paneOptions.runner ?? "auto") : null;
  const evaluation = new EvaluationController(controller, runner, thresholdChooser);
  new EvaluationView(view.root, evaluation);
  view.root.append(view.portable);
  return { controller, basis, view, evaluation };
}
