-- ringside: headless end-to-end check of the Neovim plugin. Run with
--   RINGSIDE_BIN=<server> nvim --headless -u editors/nvim/minimal_init.lua \
--     -c 'luafile editors/nvim/test/e2e.lua' <file.loop>
-- It waits for the server to attach to the buffer, runs the plot and checks
-- that an html file was written and handed to the opener; exits 0 on
-- success, 1 on failure.
local function fail(msg)
  io.stderr:write('e2e FAIL: ' .. msg .. '\n')
  vim.cmd('cquit 1')
end

local ok, err = pcall(function()
  if vim.bo.filetype ~= 'loop' then
    error('filetype is "' .. vim.bo.filetype .. '", want "loop"')
  end
  if vim.bo.commentstring ~= '# %s' then
    error('commentstring is "' .. vim.bo.commentstring .. '"')
  end
  if vim.fn.exists(':RingsidePlot') ~= 2 then
    error(':RingsidePlot is not defined')
  end
  local ringside = require('ringside')
  local attached = vim.wait(10000, function()
    local c = ringside.client(0)
    return c ~= nil and c.initialized ~= false and c.server_capabilities ~= nil
      and c.server_capabilities.executeCommandProvider ~= nil
  end, 50)
  if not attached then
    error('the server did not attach within 10 s')
  end
  local path, perr, opened
  local done = false
  ringside.config.open = function(p) opened = p end -- the page goes to the opener
  ringside.plot({ on_done = function(p, e) path, perr, done = p, e, true end })
  if not vim.wait(10000, function() return done end, 50) then
    error('no answer to ringside.plot within 10 s')
  end
  if not path then
    error('plot failed: ' .. vim.inspect(perr))
  end
  if opened ~= path then
    error('the page ' .. path .. ' was not opened (opener got ' .. tostring(opened) .. ')')
  end
  local f = assert(io.open(path, 'r'))
  local html = f:read('*a')
  f:close()
  if not html:find('<svg', 1, true) then
    error('written page has no svg: ' .. html:sub(1, 200))
  end
  print('e2e ok: ' .. path)
end)
if not ok then
  fail(tostring(err))
else
  vim.cmd('qall!')
end
