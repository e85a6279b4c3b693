-- Live diagnostics in Neovim with the plugin's default settings (run by
-- server/e2e_nvim_test.go, TestNeovimLiveAnalysis):
--   RINGSIDE_FILES=<demo copies, ':'-separated> RINGSIDE_EDIT=<gimbal copy>
--   RINGSIDE_RESULT=<json path> nvim --headless --clean -u <init> -c 'luafile live.lua'
-- Opens each file and records the error diagnostics the server publishes
-- before any save; then, in the gimbal file, changes the gain krate without
-- saving and records the diagnostics that follow. Nothing is ever written.
local out = os.getenv('RINGSIDE_RESULT')
local result = { ok = false, steps = {}, opened = {} }

local function finish()
  local f = io.open(out, 'w')
  f:write(vim.fn.json_encode(result))
  f:close()
  vim.cmd('qall!')
end

local raw = {}
local orig = vim.lsp.handlers['textDocument/publishDiagnostics']
vim.lsp.handlers['textDocument/publishDiagnostics'] = function(err, res, ctx, config)
  if res then
    raw[res.uri] = res.diagnostics
  end
  return orig(err, res, ctx, config)
end

local function errors(uri)
  local list = {}
  for _, d in ipairs(raw[uri] or {}) do
    if d.severity == 1 then
      table.insert(list, { code = d.code, line = d.range.start.line + 1, message = d.message })
    end
  end
  return list
end

local function has(uri, code)
  for _, d in ipairs(raw[uri] or {}) do
    if d.code == code then
      return true
    end
  end
  return false
end

local ok, err = pcall(function()
  for file in string.gmatch(os.getenv('RINGSIDE_FILES'), '[^:]+') do
    vim.cmd('edit ' .. vim.fn.fnameescape(file))
    local bufnr = vim.api.nvim_get_current_buf()
    local uri = vim.uri_from_bufnr(bufnr)
    if not vim.wait(30000, function() return raw[uri] ~= nil end, 20) then
      error('no diagnostics for ' .. file)
    end
    result.opened[file] = errors(uri)
    table.insert(result.steps, 'opened ' .. vim.fn.fnamemodify(file, ':t'))
  end

  local file = os.getenv('RINGSIDE_EDIT')
  vim.cmd('edit ' .. vim.fn.fnameescape(file))
  local bufnr = vim.api.nvim_get_current_buf()
  local uri = vim.uri_from_bufnr(bufnr)
  if not has(uri, 'pole-on-circle') then
    error('pan_rate is not on the circle before the edit: ' .. vim.inspect(raw[uri]))
  end
  result.before = errors(uri)
  -- krate = 1.5 puts pan_rate's pole on z = -1; 0.5 makes it stable.
  for i, line in ipairs(vim.api.nvim_buf_get_lines(bufnr, 0, -1, false)) do
    if line == 'gain krate = 1.5' then
      vim.api.nvim_buf_set_lines(bufnr, i - 1, i, false, { 'gain krate = 0.5' })
    end
  end
  if not vim.wait(30000, function() return not has(uri, 'pole-on-circle') end, 20) then
    error('pan_rate still on the circle after the edit: ' .. vim.inspect(raw[uri]))
  end
  result.after = errors(uri)
  result.modified = vim.bo[bufnr].modified
  table.insert(result.steps, 'edited')
  result.ok = true
end)
if not ok then
  result.error = tostring(err)
end
finish()
