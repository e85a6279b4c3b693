-- ringside: buffer settings for .loop files.
if vim.b.did_ftplugin then
  return
end
vim.b.did_ftplugin = 1

vim.bo.commentstring = '# %s'
vim.bo.comments = ':#'
-- Names may contain underscores (gain_margin, belt_speed).
vim.opt_local.iskeyword:append('_')
vim.b.undo_ftplugin = 'setlocal commentstring< comments< iskeyword<'
