-- ringside server end-to-end check in Neovim (run by server/e2e_nvim_test.go):
--   RINGSIDE_BIN=... RINGSIDE_FILE=<copy of unstable.loop> RINGSIDE_RESULT=<json path> \
--   nvim --headless --clean -u editors/nvim/minimal_init.lua -c 'luafile server/testdata/nvim/e2e.lua'
-- Opens the file as a user would and checks what the set-up promises: the
-- buffer-local maps on attach, K showing the server's hover (not a man
-- page), ]d moving to a diagnostic, code lenses that appear and follow the
-- analysis without a manual refresh, the gain quick-fix, and :RingsidePlot
-- opening the page (through the system's opener, a stand-in here). The
-- outcome goes to RINGSIDE_RESULT as JSON.
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

-- The text of the first floating window, or nil.
local function float_text()
  for _, win in ipairs(vim.api.nvim_list_wins()) do
    if vim.api.nvim_win_get_config(win).relative ~= '' then
      local lines = vim.api.nvim_buf_get_lines(vim.api.nvim_win_get_buf(win), 0, -1, false)
      return table.concat(lines, '\n'), win
    end
  end
  return nil
end

local function lens_titles(bufnr)
  local titles = {}
  for _, l in ipairs(vim.lsp.codelens.get(bufnr) or {}) do
    if l.command then
      table.insert(titles, l.command.title)
    end
  end
  return table.concat(titles, ' | ')
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

  for _, lhs in ipairs({ 'K', '[d', ']d', '<leader>ca', '<leader>rn', 'gd' }) do
    local m = vim.fn.maparg(lhs, 'n', false, true)
    if m.buffer ~= 1 or not tostring(m.desc):find('^ringside:') then
      error('no buffer-local ringside map for ' .. lhs .. ': ' .. vim.inspect(m))
    end
  end
  step('keys')

  -- K on the loop name: the server's hover in a float.
  vim.api.nvim_win_set_cursor(0, { diag.range.start.line + 1, diag.range.start.character })
  vim.cmd('normal K')
  if not vim.wait(10000, function() return float_text() ~= nil end, 20) then
    error('K opened no hover window')
  end
  local text, win = float_text()
  result.hover = text
  vim.api.nvim_win_close(win, true)
  step('K')

  -- ]d from the top lands on a diagnostic's line.
  vim.api.nvim_win_set_cursor(0, { 1, 0 })
  vim.cmd('normal ]d')
  local line = vim.api.nvim_win_get_cursor(0)[1] - 1
  local on_diag = false
  for _, d in ipairs(vim.diagnostic.get(bufnr)) do
    on_diag = on_diag or d.lnum == line
  end
  if not on_diag or line == 0 then
    error(']d moved to line ' .. line .. ', which has no diagnostic')
  end
  step(']d')

  -- Lenses arrive without a manual refresh.
  if not vim.wait(10000, function() return lens_titles(bufnr):find('UNSTABLE') ~= nil end, 50) then
    error('no verdict lens: ' .. lens_titles(bufnr))
  end
  result.lens_before = lens_titles(bufnr)
  step('lenses')

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
  -- The lens follows the new verdict by itself.
  if not vim.wait(10000, function()
    local t = lens_titles(bufnr)
    return t:find('stable') ~= nil and t:find('UNSTABLE') == nil
  end, 50) then
    error('lens still says: ' .. lens_titles(bufnr))
  end
  result.lens_after = lens_titles(bufnr)
  step('lens refreshed')

  -- :RingsidePlot writes the page and opens it.
  vim.cmd('RingsidePlot')
  local opened = os.getenv('RINGSIDE_OPENED')
  if not vim.wait(15000, function() return vim.loop.fs_stat(opened) ~= nil end, 50) then
    error(':RingsidePlot opened nothing')
  end
  step('plot opened')
  result.ok = true
end)
if not ok then
  result.error = tostring(err)
end
finish()
