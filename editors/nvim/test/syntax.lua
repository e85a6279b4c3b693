-- ringside: headless check of syntax/loop.vim and ftplugin/loop.lua on
-- editors/test/sample.loop. Exits 1 when a group is not the expected one.
--   nvim --headless -u editors/nvim/minimal_init.lua -c 'luafile editors/nvim/test/syntax.lua' editors/test/sample.loop
local failures = {}
local function group_at(lnum, col)
  return vim.fn.synIDattr(vim.fn.synID(lnum, col, 1), 'name')
end
-- { line, text to find, offset into it, expected group }
local checks = {
  { 1, 'Fixture', 0, 'loopComment' },
  { 2, 'sample', 0, 'loopStatement' },
  { 2, '2', 0, 'loopNumber' },
  { 2, 'ms', 0, 'loopUnit' },
  { 4, 'max', 0, 'loopModifier' },
  { 4, 'kp', 0, '' },
  { 7, 'z /', 0, 'loopVariable' },
  { 8, '7s', 0, 'loopNumber' },
  { 8, '7s', 1, 'loopVariable' }, -- `7s` is 7 * s, not seven seconds
  { 8, 'zoh', 0, 'loopMethod' },
  { 8, 'via', 0, 'loopModifier' },
  { 14, 'gain_margin', 0, 'loopMetric' },
  { 14, 'dB', 0, 'loopUnit' },
  { 15, 'deg', 0, 'loopUnit' },
}
if vim.bo.filetype ~= 'loop' then
  table.insert(failures, 'filetype is "' .. vim.bo.filetype .. '"')
end
if vim.bo.commentstring ~= '# %s' then
  table.insert(failures, 'commentstring is "' .. vim.bo.commentstring .. '"')
end
for _, c in ipairs(checks) do
  local line = vim.fn.getline(c[1])
  local col = line:find(c[2], 1, true)
  if not col then
    table.insert(failures, string.format('line %d has no %q', c[1], c[2]))
  else
    local got = group_at(c[1], col + c[3])
    if got ~= c[4] then
      table.insert(failures, string.format('line %d %q+%d: group %q, want %q', c[1], c[2], c[3], got, c[4]))
    end
  end
end
if #failures > 0 then
  io.stderr:write('syntax FAIL:\n  ' .. table.concat(failures, '\n  ') .. '\n')
  vim.cmd('cquit 1')
end
print(string.format('syntax ok: %d checks', #checks))
vim.cmd('qall!')
