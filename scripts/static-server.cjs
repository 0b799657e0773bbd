/**
 * A small static file server for the built add-in (dist/), used by `npm start` (over HTTPS with the
 * development certificates) and by the browser tests (over plain HTTP on 127.0.0.1).
 *
 * Every HTML response carries the same Content-Security-Policy as the pages' own meta tags, plus the
 * headers a meta tag cannot set. Only GET and HEAD are answered; paths are confined to the root
 * folder. CommonJS so both the ES-module start script and the (CommonJS-compiled) tests can load it.
 */
"use strict";
const fs = require("fs");
const http = require("http");
const https = require("https");
const path = require("path");

/**
 * The policy: everything from our own origin only; no eval; no connections elsewhere; no plugins;
 * no <base> tricks; forms post nowhere. data: images let the plot export a picture.
 * 'wasm-unsafe-eval' lets the engine compile its own WebAssembly kernels (src/engine/kernels, bytes
 * bundled with our scripts); it does not allow eval or new Function for JavaScript.
 * Every page carries this same policy as a meta tag: the pane and workbench pages (written by hand)
 * and the generated help page (scripts/help-page.js takes it from here). No page has an inline style
 * or script, so style-src is 'self' alone, as strict as the metas. test/unit/privacy.test.ts checks
 * the header and the meta tags.
 */
const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self' 'wasm-unsafe-eval'",
  "connect-src 'self'",
  "img-src 'self' data:",
  "style-src 'self'",
  "font-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
].join("; ");

const TYPES = {
  ".html": "text/html; charset=utf-8",
  ".js": "text/javascript; charset=utf-8",
  ".mjs": "text/javascript; charset=utf-8",
  ".json": "application/json; charset=utf-8",
  ".css": "text/css; charset=utf-8",
  ".png": "image/png",
  ".svg": "image/svg+xml",
  ".ico": "image/x-icon",
  ".xml": "application/xml; charset=utf-8",
  ".map": "application/json; charset=utf-8",
  ".txt": "text/plain; charset=utf-8",
};

/**
 * Create (not start) a server for `root`.
 * @param {{ root: string, tls?: { key: Buffer|string, cert: Buffer|string } }} options
 * @returns {import("http").Server}
 */
function createStaticServer(options) {
  const root = path.resolve(options.root);
  const handler = (req, res) => {
    if (req.method !== "GET" && req.method !== "HEAD") {
      res.writeHead(405, { Allow: "GET, HEAD" });
      res.end();
      return;
    }
    let pathname;
    try {
      pathname = decodeURIComponent(new URL(req.url || "/", "http://localhost").pathname);
    } catch {
      res.writeHead(400);
      res.end("Bad request");
      return;
    }
    if (pathname.endsWith("/")) pathname += "index.html";
    const file = path.resolve(root, "." + pathname);
    // Confine to the root folder (no ../ escapes).
    if (file !== root && !file.startsWith(root + path.sep)) {
      res.writeHead(403);
      res.end("Forbidden");
      return;
    }
    fs.stat(file, (err, stat) => {
      if (err || !stat.isFile()) {
        res.writeHead(404, { "Content-Type": "text/plain; charset=utf-8" });
        res.end("Not found");
        return;
      }
      const type = TYPES[path.extname(file).toLowerCase()] || "application/octet-stream";
      const headers = {
        "Content-Type": type,
        "Content-Length": stat.size,
        "Cache-Control": "no-store",
        "X-Content-Type-Options": "nosniff",
        "Referrer-Policy": "no-referrer",
      };
      if (type.startsWith("text/html")) headers["Content-Security-Policy"] = CONTENT_SECURITY_POLICY;
      res.writeHead(200, headers);
      if (req.method === "HEAD") {
        res.end();
        return;
      }
      fs.createReadStream(file).pipe(res);
    });
  };
  return options.tls ? https.createServer(options.tls, handler) : http.createServer(handler);
}

/** Listen on `port` at `host`; resolves with the bound port, rejects on error (e.g. port in use). */
function listen(server, port, host) {
  return new Promise((resolve, reject) => {
    const onError = (e) => reject(e);
    server.once("error", onError);
    server.listen(port, host, () => {
      server.off("error", onError);
      resolve(server.address().port);
    });
  });
}

module.exports = { createStaticServer, listen, CONTENT_SECURITY_POLICY };
