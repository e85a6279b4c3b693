-- ringside: Neovim client of the ringside language server for .loop files.
--
-- require('ringside').setup{
--   cmd = { 'ringside', 'serve' },           -- or a string: the binary, 'serve' is added
--   settings = { gainMarginDb = 6, phaseMarginDeg = 30, trigger = 'change', tolerance = 1e-6 },
--   root_markers = { '.git' },
--   keys = true,                             -- buffer-local maps on attach (false: none; a table: your own)
--   open = nil,                              -- function(path) that shows the plot page; default: the system's opener
--   on_attach = nil,                         -- function(client, bufnr), called after ours
-- }
--
-- Works on Neovim 0.7 and later: vim.lsp.start where it exists (0.8+),
-- otherwise vim.lsp.start_client + vim.lsp.buf_attach_client with one client
-- per root folder.
local M = {}

local plot_command = 'ringside.plot'

-- Buffer-local maps set when the server attaches, so that K asks the
-- server (not 'keywordprg', which runs man) on every Neovim from 0.7. Each
-- entry: { lhs, function, description }.
local default_keys = {
  { 'K', function() vim.lsp.buf.hover() end, 'hover: figures of the block, loop or gain' },
  { 'gd', function() vim.lsp.buf.definition() end, 'go to the declaration' },
  { 'gr', function() vim.lsp.buf.references() end, 'list the references' },
  { '<leader>ca', function() vim.lsp.buf.code_action() end, 'quick-fixes (code actions)' },
  { '<leader>rn', function() vim.lsp.buf.rename() end, 'rename a gain, block or loop' },
  { '[d', function() vim.diagnostic.goto_prev() end, 'previous diagnostic' },
  { ']d', function() vim.diagnostic.goto_next() end, 'next diagnostic' },
  { '<leader>e', function() vim.diagnostic.open_float() end, 'the diagnostics of this line' },
  { '<leader>rp', function() M.plot() end, 'open the loop plots' },
}

local defaults = {
  cmd = { 'ringside', 'serve' },
  settings = {},
  root_markers = { '.git' },
  keys = true,
}

M.config = vim.deepcopy(defaults)

-- Clients started through the 0.7 fallback, by root folder.
local clients_by_root = {}

local function notify(msg, level)
  vim.notify('ringside: ' .. msg, level or vim.log.levels.INFO)
end

local function normalize_cmd(cmd)
  if type(cmd) == 'string' then
    return { cmd, 'serve' }
  end
  if type(cmd) ~= 'table' or type(cmd[1]) ~= 'string' or cmd[1] == '' then
    error('ringside.setup: cmd must be a string or a list such as { "ringside", "serve" }', 3)
  end
  return vim.deepcopy(cmd)
end

-- The analysis options; accepts either the bare table or one wrapped in { ringside = ... }.
local function analysis_settings(settings)
  if type(settings) ~= 'table' then
    return {}
  end
  if type(settings.ringside) == 'table' then
    return settings.ringside
  end
  return settings
end

local function is_dir(path)
  local stat = vim.loop.fs_stat(path)
  return stat ~= nil and stat.type == 'directory'
end

local function exists(path)
  return vim.loop.fs_stat(path) ~= nil
end

-- Walks up from the file's folder to the first folder holding one of the
-- markers; without one, the file's own folder is the root.
function M.find_root(fname, markers)
  local start = vim.fn.fnamemodify(fname, ':p:h')
  local dir = start
  while dir and dir ~= '' do
    for _, marker in ipairs(markers or M.config.root_markers) do
      if exists(dir .. '/' .. marker) then
        return dir
      end
    end
    local parent = vim.fn.fnamemodify(dir, ':h')
    if parent == dir then
      break
    end
    dir = parent
  end
  return start
end

local function notify_client(client, method, params)
  if vim.fn.has('nvim-0.11') == 1 then
    return client:notify(method, params)
  end
  return client.notify(method, params)
end

-- Lenses carry each loop's verdict; they change with every analysis, so
-- they are asked for again whenever the text settles or is written.
local function refresh_lenses(client, bufnr)
  local caps = client.server_capabilities or client.resolved_capabilities or {}
  if not (caps.codeLensProvider or caps.code_lens) then
    return
  end
  if bufnr ~= vim.api.nvim_get_current_buf() then
    return -- 0.7's refresh() works on the current buffer only
  end
  pcall(vim.lsp.codelens.refresh)
end

local function set_keys(bufnr)
  local keys = M.config.keys
  if keys == false then
    return
  end
  if keys == true or keys == nil then
    keys = default_keys
  end
  for _, k in ipairs(keys) do
    vim.keymap.set('n', k[1], k[2], { buffer = bufnr, silent = true, desc = 'ringside: ' .. (k[3] or k[1]) })
  end
end

-- Called when the server attaches to a buffer (0.7 and later alike).
local function on_attach(client, bufnr)
  set_keys(bufnr)
  local group = vim.api.nvim_create_augroup('ringside_lenses_' .. bufnr, { clear = true })
  vim.api.nvim_create_autocmd({ 'BufEnter', 'CursorHold', 'InsertLeave', 'BufWritePost' }, {
    group = group,
    buffer = bufnr,
    callback = function() refresh_lenses(client, bufnr) end,
  })
  -- The first lenses, once the server has had the text.
  vim.defer_fn(function() refresh_lenses(client, bufnr) end, 200)
  if M.config.on_attach then
    M.config.on_attach(client, bufnr)
  end
end

local function client_config(bufnr)
  local fname = vim.api.nvim_buf_get_name(bufnr)
  local root
  if fname == '' then
    root = vim.loop.cwd()
  else
    root = M.find_root(fname, M.config.root_markers)
  end
  if not is_dir(root) then
    root = vim.loop.cwd()
  end
  local options = analysis_settings(M.config.settings)
  return {
    name = 'ringside',
    cmd = M.config.cmd,
    root_dir = root,
    workspace_folders = { { uri = vim.uri_from_fname(root), name = root } },
    init_options = options,
    settings = { ringside = options },
    on_attach = on_attach,
    on_init = function(client)
      -- Neovim 0.7 does not send the settings by itself; the server reads
      -- them from workspace/didChangeConfiguration under "ringside".
      notify_client(client, 'workspace/didChangeConfiguration', { settings = { ringside = analysis_settings(M.config.settings) } })
    end,
  }
end

local warned_missing = false

local function client_alive(id)
  local client = id and vim.lsp.get_client_by_id(id)
  if not client then
    return nil
  end
  local stopped = client.is_stopped
  if type(stopped) == 'function' then
    -- 0.7-0.10: is_stopped(); 0.11+: client:is_stopped().
    local ok, res = pcall(stopped)
    if not ok then
      ok, res = pcall(stopped, client)
    end
    if ok and res then
      return nil
    end
  end
  return client
end

-- Starts (or reuses) the server for a buffer and attaches it.
function M.attach(bufnr)
  bufnr = (bufnr == nil or bufnr == 0) and vim.api.nvim_get_current_buf() or bufnr
  if vim.fn.executable(M.config.cmd[1]) ~= 1 then
    if not warned_missing then
      warned_missing = true
      notify('server "' .. M.config.cmd[1] .. '" not found; build it with `go build -o ringside .` and put it on PATH, or pass cmd to setup', vim.log.levels.WARN)
    end
    return nil
  end
  local config = client_config(bufnr)
  if vim.lsp.start then
    return vim.lsp.start(config, { bufnr = bufnr })
  end
  local id = clients_by_root[config.root_dir]
  if not client_alive(id) then
    id = vim.lsp.start_client(config)
    if not id then
      notify('could not start ' .. table.concat(config.cmd, ' '), vim.log.levels.ERROR)
      return nil
    end
    clients_by_root[config.root_dir] = id
  end
  vim.lsp.buf_attach_client(bufnr, id)
  return id
end

-- The ringside client attached to a buffer, if any.
function M.client(bufnr)
  bufnr = (bufnr == nil or bufnr == 0) and vim.api.nvim_get_current_buf() or bufnr
  local list
  if vim.lsp.get_clients then
    list = vim.lsp.get_clients({ bufnr = bufnr, name = 'ringside' })
  else
    list = vim.lsp.buf_get_clients(bufnr)
  end
  for _, client in pairs(list) do
    if client.name == 'ringside' then
      return client
    end
  end
  return nil
end

local function request(client, method, params, handler, bufnr)
  if vim.fn.has('nvim-0.11') == 1 then
    return client:request(method, params, handler, bufnr)
  end
  return client.request(method, params, handler, bufnr)
end

-- Shows a written plot page: opts.open, else the system's opener
-- (vim.ui.open on 0.10+; before that xdg-open, or open on macOS only: on
-- Linux `open` is openvt), else only the path is printed.
function M.open_page(path)
  if M.config.open then
    return M.config.open(path)
  end
  if vim.ui and vim.ui.open then
    local ok = pcall(vim.ui.open, path)
    if ok then
      return
    end
  end
  local opener = vim.fn.has('mac') == 1 and 'open' or 'xdg-open'
  if vim.fn.executable(opener) == 1 then
    vim.fn.jobstart({ opener, path }, { detach = true })
    return
  end
  notify('no ' .. opener .. ' to open ' .. path .. '; open it in a browser', vim.log.levels.WARN)
end

-- Writes the html of a plot result to a temp file; returns its path or nil, err.
function M.write_plot_page(result)
  if type(result) ~= 'table' or type(result.html) ~= 'string' or result.html == '' then
    return nil, 'the server returned no plot page'
  end
  local path = vim.fn.tempname() .. '.html'
  local file, err = io.open(path, 'w')
  if not file then
    return nil, 'cannot write ' .. path .. ': ' .. tostring(err)
  end
  file:write(result.html)
  file:close()
  return path
end

local function plot_handler(on_done)
  -- Handler signature of 0.5.1+: (err, result, ctx, config).
  return function(err, result)
    if err then
      notify('plot failed: ' .. (type(err) == 'table' and tostring(err.message) or tostring(err)), vim.log.levels.ERROR)
      if on_done then on_done(nil, err) end
      return
    end
    local path, werr = M.write_plot_page(result)
    if not path then
      notify(werr, vim.log.levels.ERROR)
      if on_done then on_done(nil, werr) end
      return
    end
    -- print, so the path is also in :messages and on stdout under --headless.
    print('ringside: loop plots written to ' .. path)
    M.open_page(path)
    if on_done then on_done(path) end
  end
end

-- :RingsidePlot [loop]: runs ringside.plot for the current buffer (write=false),
-- writes the returned html to a temp file and opens it (see open_page). opts.loop selects one loop;
-- opts.on_done(path, err) is called when the answer is in (used by tests).
function M.plot(opts)
  opts = opts or {}
  local bufnr = vim.api.nvim_get_current_buf()
  local client = M.client(bufnr)
  if not client then
    notify('no ringside server is attached to this buffer', vim.log.levels.ERROR)
    if opts.on_done then opts.on_done(nil, 'not attached') end
    return
  end
  local arg = { uri = vim.uri_from_bufnr(bufnr), write = false }
  if opts.loop then
    arg.loop = opts.loop
  end
  request(client, 'workspace/executeCommand', { command = plot_command, arguments = { arg } }, plot_handler(opts.on_done), bufnr)
end

-- The server's code lenses carry ringside.plot; run them through the server
-- and write the page, as :RingsidePlot does.
local function codelens_plot(command, ctx)
  local client = vim.lsp.get_client_by_id(ctx.client_id)
  if not client then
    return
  end
  request(client, 'workspace/executeCommand', { command = command.command, arguments = command.arguments }, plot_handler(nil), ctx.bufnr)
end

-- Changes the analysis options of every running ringside client, e.g.
-- require('ringside').update_settings{ trigger = 'change' }.
function M.update_settings(settings)
  local options = vim.tbl_extend('force', analysis_settings(M.config.settings), analysis_settings(settings))
  M.config.settings = options
  local list = vim.lsp.get_clients and vim.lsp.get_clients({ name = 'ringside' }) or vim.lsp.get_active_clients()
  for _, client in pairs(list) do
    if client.name == 'ringside' then
      client.config.settings = { ringside = options }
      notify_client(client, 'workspace/didChangeConfiguration', { settings = { ringside = options } })
    end
  end
end

function M.setup(opts)
  opts = opts or {}
  M.config = {
    cmd = normalize_cmd(opts.cmd or defaults.cmd),
    settings = opts.settings or defaults.settings,
    root_markers = opts.root_markers or defaults.root_markers,
    keys = opts.keys == nil and defaults.keys or opts.keys,
    open = opts.open,
    on_attach = opts.on_attach,
  }
  vim.lsp.commands[plot_command] = codelens_plot

  local group = vim.api.nvim_create_augroup('ringside', { clear = true })
  vim.api.nvim_create_autocmd('FileType', {
    group = group,
    pattern = 'loop',
    callback = function(args)
      M.attach(args.buf)
    end,
  })
  -- Buffers that were already open before setup.
  for _, bufnr in ipairs(vim.api.nvim_list_bufs()) do
    if vim.api.nvim_buf_is_loaded(bufnr) and vim.bo[bufnr].filetype == 'loop' then
      M.attach(bufnr)
    end
  end
end

return M
