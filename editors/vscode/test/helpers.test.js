// Unit tests of the extension's pure helpers (compiled to out/ by `npm test`).
const test = require("node:test");
const assert = require("node:assert/strict");
const path = require("node:path");
const { analysisOptions, serverCommand } = require("../out/settings.js");
const { parsePlotResult, plotPage, withPolicy, contentSecurityPolicy } = require("../out/plotPage.js");

const reader = (values) => (name) => values[name];

test("analysis options: settings pass through, bad values fall back to defaults", () => {
  assert.deepEqual(analysisOptions(reader({ gainMarginDb: 8, phaseMarginDeg: 45, trigger: "change", tolerance: 1e-9 })), {
    gainMarginDb: 8,
    phaseMarginDeg: 45,
    trigger: "change",
    tolerance: 1e-9,
  });
  assert.deepEqual(analysisOptions(reader({ gainMarginDb: "8", phaseMarginDeg: NaN, trigger: "always", tolerance: -1 })), {
    gainMarginDb: 6,
    phaseMarginDeg: 30,
    trigger: "change",
    tolerance: 1e-6,
  });
});

test("server command: bare name, home, workspace-relative path, log flags", () => {
  assert.deepEqual(serverCommand(reader({}), "/ws", "/home/u"), { command: "ringside", args: ["serve"] });
  assert.deepEqual(serverCommand(reader({ serverPath: "~/bin/ringside" }), "/ws", "/home/u").command, path.join("/home/u", "bin/ringside"));
  assert.equal(serverCommand(reader({ serverPath: "./bin/ringside" }), "/ws", "/h").command, path.resolve("/ws", "bin/ringside"));
  assert.equal(serverCommand(reader({ serverPath: "/opt/ringside" }), "/ws", "/h").command, "/opt/ringside");
  assert.deepEqual(serverCommand(reader({ logFile: "/tmp/r.log", logLevel: "debug" }), undefined, "/h").args, [
    "serve",
    "--log-file",
    "/tmp/r.log",
    "--log-level",
    "debug",
  ]);
});

test("plot results are validated", () => {
  assert.throws(() => parsePlotResult(null), /no result/);
  assert.throws(() => parsePlotResult({ loops: "x" }), /not a list/);
  assert.throws(() => parsePlotResult({ loops: [] }), /neither/);
  const r = parsePlotResult({ loops: [{ name: "a", svg: "<svg/>" }], written: [] });
  assert.equal(r.loops[0].name, "a");
});

test("the plot page carries a policy that forbids scripts and remote loads", () => {
  const policy = contentSecurityPolicy("vscode-webview://x");
  assert.match(policy, /^default-src 'none'/);
  assert.doesNotMatch(policy, /script-src|https?:/);
  const page = withPolicy("<!doctype html><html><head><title>t</title></head><body></body></html>", policy);
  assert.match(page, /<head><meta http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;;[^"]*"><title>/);
  // Pages without <head> or <html> get one.
  assert.match(withPolicy("<svg/>", policy), /^<head><meta http-equiv="Content-Security-Policy"/);
  assert.match(withPolicy("<!doctype html><p>x</p>", policy), /^<!doctype html><head><meta /);
  // Without html from the server the page is built from the SVGs, names escaped.
  const built = plotPage({ loops: [{ name: "a<b", svg: "<svg id='p'/>" }] }, "");
  assert.match(built, /<h2>a&#60;b<\/h2>/);
  assert.match(built, /<svg id='p'\/>/);
  assert.match(built, /Content-Security-Policy/);
});
