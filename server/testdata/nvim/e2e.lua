-- ringside server end-to-end check in Neovim (run by server/e2e_nvim_test.go):
--   RINGSIDE_BIN=... RINGSIDE_FILE=<copy of unstable.loop> RINGSIDE_RESULT=<json path> \
--   nvim --headless --clean -u editors/nvim/minimal_init.lua -c 'luafile server/testdata/nvim/e2e.lua'
-- Opens the file, waits for the unstable-loop diagnostic, reads a hover,
-- applies the gain quick-fix, writes the buffer (a temp copy) and waits for
-- the diagnostic to go. The outcome goes to RINGSIDE_RESULT as JSON.
local file = os.getenv('RINGSIDE_FILE')
local out = os.getenv('RINGSIDE_RESULT')
local result = { ok = false, steps = {} }

local function finish()
  local f = io.open(out, 'w')
  f:write(vim.fn.json_encode(result))
  f:close()
  vim.cmd('qall!')
end

local function step(name)
  table.insert(result.steps, name)
end

-- Keep the raw LSP diagnostics as the server sent them.
local raw = {}
local orig = vim.lsp.handlers['textDocument/publishDiagnostics']
vim.lsp.handlers['textDocument/publishDiagnostics'] = function(err, res, ctx, config)
  if res then
    raw[res.uri] = res.diagnostics
  end
  return orig(err, res, ctx, config)
end

local function find(uri, code)
  for _, d in ipairs(raw[uri] or {}) do
    if d.code == code then
      return d
    end
  end
  return nil
end

local ok, err = pcall(function()
  vim.cmd('edit ' .. vim.fn.fnameescape(file))
  local bufnr = vim.api.nvim_get_current_buf()
  local uri = vim.uri_from_bufnr(bufnr)
  if not vim.wait(15000, function() return require('ringside').client(bufnr) ~= nil end, 20) then
    error('server did not attach')
  end
  step('attached')
  if not vim.wait(15000, function() return find(uri, 'pole-outside') ~= nil end, 20) then
    error('no pole-outside diagnostic: ' .. vim.inspect(raw[uri]))
  end
  step('diagnostic')
  local diag = find(uri, 'pole-outside')

  local hover = vim.lsp.buf_request_sync(bufnr, 'textDocument/hover',
    { textDocument = { uri = uri }, position = diag.range.start }, 10000)
  for _, r in pairs(hover or {}) do
    if r.result and r.result.contents then
      result.hover = r.result.contents.value
    end
  end
  if not result.hover then
    error('no hover: ' .. vim.inspect(hover))
  end
  step('hover')

  local actions = vim.lsp.buf_request_sync(bufnr, 'textDocument/codeAction', {
    textDocument = { uri = uri }, range = diag.range, context = { diagnostics = { diag } },
  }, 10000)
  local fix
  for _, r in pairs(actions or {}) do
    for _, a in ipairs(r.result or {}) do
      if a.title:find('^Set ki to') then
        fix = a
      end
    end
  end
  if not fix then
    error('no gain quick-fix: ' .. vim.inspect(actions))
  end
  result.title = fix.title
  vim.lsp.util.apply_workspace_edit(fix.edit, 'utf-16')
  result.line = vim.api.nvim_buf_get_lines(bufnr, 3, 4, false)[1]
  step('applied')

  vim.cmd('write')
  if not vim.wait(15000, function() return raw[uri] ~= nil and find(uri, 'pole-outside') == nil end, 20) then
    error('pole-outside still reported after the fix: ' .. vim.inspect(raw[uri]))
  end
  step('fixed')
  result.ok = true
end)
if not ok then
  result.error = tostring(err)
end
finish()
