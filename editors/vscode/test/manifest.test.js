// Checks that package.json contributes exactly what editors/README.md
// promises in its marked VS Code block, and that the language set-up files it
// points to exist and are valid.
const test = require("node:test");
const assert = require("node:assert/strict");
const fs = require("node:fs");
const path = require("node:path");

const root = path.join(__dirname, "..");
const pkg = JSON.parse(fs.readFileSync(path.join(root, "package.json"), "utf8"));
const readme = fs.readFileSync(path.join(root, "..", "README.md"), "utf8");

/** The text between <!-- vscode-contributes --> and <!-- /vscode-contributes -->. */
function promisedBlock() {
  const m = /<!-- vscode-contributes -->([\s\S]*?)<!-- \/vscode-contributes -->/.exec(readme);
  assert.ok(m, "README.md lacks the vscode-contributes block");
  return m[1];
}

/** Rows of the block's table whose first cell is `kind`; returns the second cell's code spans. */
function promised(kind) {
  const names = [];
  for (const line of promisedBlock().split("\n")) {
    const cells = line.split("|").map((c) => c.trim());
    if (cells.length > 3 && cells[1] === kind) {
      const m = /`([^`]+)`/.exec(cells[2]);
      assert.ok(m, `row without a name: ${line}`);
      names.push({ name: m[1], rest: cells.slice(3).join("|") });
    }
  }
  return names;
}

test("the language the README names is registered for .loop", () => {
  const langs = promised("language");
  assert.equal(langs.length, 1);
  const lang = pkg.contributes.languages.find((l) => l.id === langs[0].name);
  assert.ok(lang, `language ${langs[0].name} not contributed`);
  assert.deepEqual(lang.extensions, [".loop"]);
  const conf = JSON.parse(fs.readFileSync(path.join(root, lang.configuration), "utf8"));
  assert.equal(conf.comments.lineComment, "#");
  assert.deepEqual(conf.brackets, [["{", "}"], ["(", ")"]]);
  const opens = conf.autoClosingPairs.map((p) => p.open);
  assert.deepEqual(opens.sort(), ['"', "(", "{"].sort());
  const grammar = pkg.contributes.grammars.find((g) => g.language === lang.id);
  assert.ok(grammar && fs.existsSync(path.join(root, grammar.path)));
});

test("the commands the README names are contributed with their titles", () => {
  const commands = promised("command");
  assert.ok(commands.length > 0);
  const ids = pkg.contributes.commands.map((c) => c.command).sort();
  assert.deepEqual(commands.map((c) => c.name).sort(), ids);
  for (const { name, rest } of commands) {
    const c = pkg.contributes.commands.find((x) => x.command === name);
    assert.ok(rest.includes(`${c.category}: ${c.title}`), `README title for ${name} differs from "${c.category}: ${c.title}"`);
  }
});

test("the settings the README names are contributed with the stated defaults", () => {
  const settings = promised("setting");
  const props = pkg.contributes.configuration.properties;
  assert.deepEqual(settings.map((s) => s.name).sort(), Object.keys(props).sort());
  for (const { name, rest } of settings) {
    const m = /default `([^`]*)`/.exec(rest);
    assert.ok(m, `README gives no default for ${name}`);
    // Defaults are written as JSON in the README: `6`, `"change"`, `1e-6`.
    assert.deepEqual(props[name].default, JSON.parse(m[1]), `default of ${name}`);
  }
});

test("the npm scripts the check script relies on exist", () => {
  for (const s of ["compile", "test", "package"]) {
    assert.equal(typeof pkg.scripts[s], "string", `script ${s}`);
  }
  assert.ok(pkg.dependencies["vscode-languageclient"]);
  assert.equal(pkg.main, "./out/extension.js");
});
