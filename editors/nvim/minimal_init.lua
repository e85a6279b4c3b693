-- ringside: minimal Neovim set-up for headless end-to-end tests.
--   RINGSIDE_BIN=/path/to/ringside nvim --headless -u editors/nvim/minimal_init.lua some.loop
-- Puts this plugin on the runtimepath and starts `$RINGSIDE_BIN serve`
-- (default `ringside serve`) for loop buffers.
local here = vim.fn.fnamemodify(debug.getinfo(1, 'S').source:sub(2), ':p:h')
vim.opt.runtimepath:prepend(here)
vim.opt.swapfile = false
vim.cmd('filetype plugin on')
vim.cmd('syntax on')
-- plugin/ is not sourced yet for a runtimepath changed inside the init file
-- when loadplugins runs later; source ours explicitly so :RingsidePlot exists.
vim.cmd('runtime! plugin/ringside.lua')

local bin = os.getenv('RINGSIDE_BIN')
if bin == nil or bin == '' then
  bin = 'ringside'
end
require('ringside').setup({
  cmd = { bin, 'serve' },
  settings = { gainMarginDb = 6, phaseMarginDeg = 30, trigger = 'change', tolerance = 1e-6 },
})
