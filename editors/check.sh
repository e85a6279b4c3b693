#!/usr/bin/env bash
# ringside: checks of the editor set-ups, run by CI. Non-interactive; exits
# non-zero on the first failure.
#   VS Code: npm ci, compile, unit tests (grammar, manifest vs README, helpers), package.
#   Neovim (if nvim is present): Lua loads, syntax/ftplugin, end-to-end against
#     the stand-in server test/fake-ringside (and against $RINGSIDE_BIN if set).
#   Emacs (if emacs is present): byte-compile and ERT, eglot against the stand-in
#     (and against $RINGSIDE_BIN if set), the README snippet from a clean emacs -q.
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
fake="$here/test/fake-ringside"
sample="$here/test/sample.loop"
limit=120 # seconds any one editor run may take before it counts as hung
chmod +x "$fake" 2>/dev/null || true # in case a copy lost the exec bit

step() { printf '\n== %s\n' "$*"; }

step "vscode: npm ci"
cd "$here/vscode"
npm ci --no-audit --no-fund </dev/null
step "vscode: compile"
npm run compile </dev/null
step "vscode: test"
npm test </dev/null
step "vscode: package"
npm run package </dev/null
test -s ringside.vsix
cd "$here"

if command -v nvim >/dev/null 2>&1; then
  step "nvim: $(nvim --version | head -n 1): Lua loads"
  timeout "$limit" nvim --headless -u NONE --cmd "set rtp+=$here/nvim" \
    -c 'lua local ok, err = pcall(require, "ringside"); if not ok then io.stderr:write(tostring(err) .. "\n"); vim.cmd("cquit 1") end' \
    -c 'qall!' </dev/null
  step "nvim: syntax and ftplugin"
  RINGSIDE_BIN="$fake" timeout "$limit" nvim --headless -u "$here/nvim/minimal_init.lua" \
    -c "luafile $here/nvim/test/syntax.lua" "$sample" </dev/null
  echo
  step "nvim: end-to-end with the stand-in server"
  RINGSIDE_BIN="$fake" timeout "$limit" nvim --headless -u "$here/nvim/minimal_init.lua" \
    -c "luafile $here/nvim/test/e2e.lua" "$sample" </dev/null
  echo
  if [ -n "${RINGSIDE_BIN:-}" ]; then
    step "nvim: end-to-end with $RINGSIDE_BIN"
    timeout "$limit" nvim --headless -u "$here/nvim/minimal_init.lua" \
      -c "luafile $here/nvim/test/e2e.lua" "$sample" </dev/null
    echo
  fi
else
  step "nvim: not installed, skipped"
fi

if command -v emacs >/dev/null 2>&1; then
  step "emacs: byte-compile"
  tmp="$(mktemp -d)"
  trap 'rm -rf "$tmp"' EXIT
  cp "$here/emacs/ringside.el" "$tmp/"
  timeout "$limit" emacs --batch -Q -L "$tmp" --eval '(setq byte-compile-error-on-warn t)' \
    -f batch-byte-compile "$tmp/ringside.el" </dev/null
  step "emacs: ERT (eglot against the stand-in server; the README snippet from emacs -q)"
  RINGSIDE_BIN="$fake" timeout "$limit" emacs --batch -Q -L "$here/emacs" \
    -l "$here/emacs/test/ringside-test.el" -f ert-run-tests-batch-and-exit </dev/null
  if [ -n "${RINGSIDE_BIN:-}" ]; then
    step "emacs: ERT with $RINGSIDE_BIN (hover, quick-fixes, plot)"
    RINGSIDE_REAL=1 timeout "$limit" emacs --batch -Q -L "$here/emacs" \
      -l "$here/emacs/test/ringside-test.el" -f ert-run-tests-batch-and-exit </dev/null
  fi
else
  step "emacs: not installed, skipped"
fi

step "editors: all checks passed"
