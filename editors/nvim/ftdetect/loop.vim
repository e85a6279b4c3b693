" ringside: .loop files hold discrete-time controllers, plants and loops.
autocmd BufRead,BufNewFile *.loop setfiletype loop
