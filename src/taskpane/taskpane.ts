/**
 * The task pane page inside Excel: waits for Office, then mounts the pane with the Excel port.
 * Outside Office (office.js reports no host) the page says where to go instead; the preview
 * workbench (preview.html) is the way to try the pane without Excel.
 */
import { ExcelPort } from "./excelPort";
import { mountPane } from "./pane";

/** Worker script of the background fit, beside this page. */
const WORKER_URL = "fitworker.js";
/** Worker script of the background cross-validation, beside this page. */
const EVAL_WORKER_URL = "evalworker.js";

function outsideOffice(root: HTMLElement): void {
  const box = document.createElement("div");
  box.className = "osm-outside";
  const title = document.createElement("h1");
  title.textContent = "Oddsmith";
  const p1 = document.createElement("p");
  p1.textContent = "This page is the Oddsmith task pane. Open it from Excel: Data > Oddsmith > Classifier, after loading manifest.xml.";
  const p2 = document.createElement("p");
  p2.append("To try Oddsmith without Excel, open the ");
  const a = document.createElement("a");
  a.href = "preview.html";
  a.textContent = "preview workbench";
  p2.append(a, ".");
  box.append(title, p1, p2);
  root.replaceChildren(box);
}

function start(): void {
  const root = document.getElementById("app");
  if (!root) return;
  if (typeof Office === "undefined") {
    outsideOffice(root);
    return;
  }
  void Office.onReady((info) => {
    if (info.host !== Office.HostType.Excel) {
      outsideOffice(root);
      return;
    }
    const port = new ExcelPort();
    const { controller } = mountPane(root, port, { workerUrl: WORKER_URL, evaluationWorkerUrl: EVAL_WORKER_URL });
    port.onProgress = (p) => controller.transferProgress(p);
  });
}

start();
