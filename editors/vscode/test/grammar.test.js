// Tokenizes sample .loop lines with the real TextMate engine used by VS Code
// (vscode-textmate + vscode-oniguruma) and checks the scopes of keywords,
// units, numbers, comments and the transform variables.
const test = require("node:test");
const assert = require("node:assert/strict");
const fs = require("node:fs");
const path = require("node:path");

const grammarPath = path.join(__dirname, "..", "syntaxes", "loop.tmLanguage.json");

test("grammar file is valid JSON with the loop scope", () => {
  const grammar = JSON.parse(fs.readFileSync(grammarPath, "utf8"));
  assert.equal(grammar.scopeName, "source.loop");
  assert.ok(Array.isArray(grammar.patterns) && grammar.patterns.length > 0);
  // Every #include must name a repository entry.
  const text = JSON.stringify(grammar);
  for (const m of text.matchAll(/"include":"#([^"]+)"/g)) {
    assert.ok(grammar.repository[m[1]], `missing repository entry ${m[1]}`);
  }
});

let grammarPromise;
function loadGrammar() {
  if (!grammarPromise) {
    const oniguruma = require("vscode-oniguruma");
    const vsctm = require("vscode-textmate");
    const wasm = fs.readFileSync(require.resolve("vscode-oniguruma/release/onig.wasm"));
    const onigLib = oniguruma.loadWASM(wasm.buffer.slice(wasm.byteOffset, wasm.byteOffset + wasm.byteLength)).then(() => ({
      createOnigScanner: (patterns) => new oniguruma.OnigScanner(patterns),
      createOnigString: (s) => new oniguruma.OnigString(s),
    }));
    const registry = new vsctm.Registry({
      onigLib,
      loadGrammar: async (scopeName) => {
        if (scopeName !== "source.loop") return null;
        return vsctm.parseRawGrammar(fs.readFileSync(grammarPath, "utf8"), grammarPath);
      },
    });
    grammarPromise = registry.loadGrammar("source.loop");
  }
  return grammarPromise;
}

/** Tokenizes lines and returns [text, innermost scope] pairs (whitespace dropped). */
async function tokens(lines) {
  const vsctm = require("vscode-textmate");
  const grammar = await loadGrammar();
  let state = vsctm.INITIAL;
  const out = [];
  for (const line of lines) {
    const r = grammar.tokenizeLine(line, state);
    for (const t of r.tokens) {
      const text = line.slice(t.startIndex, t.endIndex);
      if (text.trim() === "") continue;
      out.push([text.trim(), t.scopes[t.scopes.length - 1]]);
    }
    state = r.ruleStack;
  }
  return out;
}

function scopeOf(toks, text, nth = 0) {
  const found = toks.filter(([t]) => t === text);
  assert.ok(found.length > nth, `token ${JSON.stringify(text)} not found in ${JSON.stringify(toks)}`);
  return found[nth][1];
}

test("statement keywords, gain names, numbers and units", async () => {
  const toks = await tokens(["sample 1 ms   # one period", "gain ki = 40 max 120"]);
  assert.equal(scopeOf(toks, "sample"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "1"), "constant.numeric.loop");
  assert.equal(scopeOf(toks, "ms"), "keyword.other.unit.loop");
  assert.equal(scopeOf(toks, "one period"), "comment.line.number-sign.loop");
  assert.equal(scopeOf(toks, "gain"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "ki"), "variable.other.gain.loop");
  assert.equal(scopeOf(toks, "max"), "keyword.other.modifier.loop");
  assert.equal(scopeOf(toks, "120"), "constant.numeric.loop");
});

test("block expressions: s and z, side-by-side products, via and prewarp", async () => {
  const toks = await tokens(["block vel = 2.5 / (9s + 2.5z) via tustin prewarp 3 Hz"]);
  assert.equal(scopeOf(toks, "block"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "vel"), "entity.name.type.block.loop");
  assert.equal(scopeOf(toks, "9"), "constant.numeric.loop");
  // In an expression `9s` is 9 times s, not nine seconds.
  assert.equal(scopeOf(toks, "s"), "variable.language.transform.loop");
  assert.equal(scopeOf(toks, "z"), "variable.language.transform.loop");
  assert.equal(scopeOf(toks, "via"), "keyword.other.modifier.loop");
  assert.equal(scopeOf(toks, "tustin"), "support.function.method.loop");
  assert.equal(scopeOf(toks, "prewarp"), "keyword.other.modifier.loop");
  assert.equal(scopeOf(toks, "Hz"), "keyword.other.unit.loop");
});

test("a parenthesized expression continues on the next line", async () => {
  const toks = await tokens(["block p = 1 / (s^2 +", "    4s + 1) via zoh"]);
  assert.equal(scopeOf(toks, "s", 1), "variable.language.transform.loop");
  assert.equal(scopeOf(toks, "zoh"), "support.function.method.loop");
});

test("loop body: sign values, metrics and units", async () => {
  const toks = await tokens([
    "loop conveyor {",
    "  forward ctl belt",
    "  feedback enc",
    "  sign positive",
    "  require gain_margin >= 6 dB",
    "  require settling <= 40 ms",
    "  require delay_margin >= 2 samples",
    "  require overshoot <= 10 %",
    "}",
  ]);
  assert.equal(scopeOf(toks, "loop"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "conveyor"), "entity.name.function.loop.loop");
  assert.equal(scopeOf(toks, "{"), "punctuation.section.block.begin.loop");
  assert.equal(scopeOf(toks, "forward"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "feedback"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "sign"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "positive"), "constant.language.sign.loop");
  assert.equal(scopeOf(toks, "gain_margin"), "support.constant.metric.loop");
  assert.equal(scopeOf(toks, ">="), "keyword.operator.comparison.loop");
  assert.equal(scopeOf(toks, "dB"), "keyword.other.unit.loop");
  assert.equal(scopeOf(toks, "ms"), "keyword.other.unit.loop");
  assert.equal(scopeOf(toks, "samples"), "keyword.other.unit.loop");
  assert.equal(scopeOf(toks, "%"), "keyword.other.unit.loop");
  // Plain names in a loop body are not keywords.
  assert.equal(scopeOf(toks, "enc"), "source.loop");
});

test("use paths are strings; names that merely contain keywords are not keywords", async () => {
  const toks = await tokens(['use "plants/belt.loop"', "gain sample_rate = 10"]);
  assert.equal(scopeOf(toks, "use"), "keyword.other.statement.loop");
  assert.equal(scopeOf(toks, "plants/belt.loop"), "string.quoted.double.loop");
  assert.equal(scopeOf(toks, "sample_rate"), "variable.other.gain.loop");
});

test("micro seconds in both spellings are a unit", async () => {
  const toks = await tokens(["sample 50 \u00b5s", "sample 50 \u03bcs"]);
  assert.equal(scopeOf(toks, "\u00b5s"), "keyword.other.unit.loop");
  assert.equal(scopeOf(toks, "\u03bcs"), "keyword.other.unit.loop");
});
