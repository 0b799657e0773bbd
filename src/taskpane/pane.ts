/**
 * Mount the task pane (controller + view) into a container, against any WorkbookPort. Used by the
 * Office page (taskpane.ts, with the Excel port) and by the preview workbench (with the in-memory port).
 */
import { PaneController, type PaneOptions } from "./paneController";
import { PaneView } from "./paneView";
import type { WorkbookPort } from "./port";

export interface MountedPane {
  controller: PaneController;
  view: PaneView;
}

export function mountPane(container: HTMLElement, port: WorkbookPort, options: Omit<PaneOptions, "port"> = {}): MountedPane {
  const controller = new PaneController({ port, ...options });
  const view = new PaneView(container, controller, port);
  return { controller, view };
}
