-- ringside: user commands, defined once; the server starts only after
-- require('ringside').setup{...}.
if vim.g.loaded_ringside then
  return
end
vim.g.loaded_ringside = 1

vim.api.nvim_create_user_command('RingsidePlot', function(args)
  require('ringside').plot({ loop = args.args ~= '' and args.args or nil })
end, { nargs = '?', desc = 'ringside: write the loop plots of this buffer to an html file' })
