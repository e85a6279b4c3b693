" ringside: basic highlighting of .loop files.
if exists('b:current_syntax')
  finish
endif

syntax case match
syntax iskeyword @,48-57,_,192-255

syntax keyword loopStatement sample use gain block loop forward feedback sign require
syntax keyword loopModifier via min max prewarp vary to
syntax keyword loopMethod zoh foh tustin matched
syntax keyword loopSign negative positive
syntax keyword loopMetric gain_margin phase_margin delay_margin radius damping peak_sensitivity overshoot settling disk_margin

" A number, optionally followed by a unit. Inside expressions `9s` means 9 * s,
" so a unit only counts when a space separates it from the number.
syntax match loopNumber /\%(\<\|[^A-Za-z0-9_.]\@<=\)-\?\%(\d\+\%(\.\d*\)\?\|\.\d\+\)\%([eE][-+]\?\d\+\)\?/
" The Laplace and z-transform variables, also right after a number (9s, 0.5z).
syntax match loopVariable /\%([A-Za-z_]\)\@<![sz]\%([A-Za-z0-9_]\)\@!/
" Defined after loopVariable so that `1 s` (with a space) is a unit.
syntax match loopUnit /\%(\d\s\+\)\@<=\%(rad\/s\|kHz\|Hz\|dB\|deg\|samples\|ms\|us\|µs\|μs\|s\|%\)\%([A-Za-z0-9_]\)\@!/
syntax match loopOperator /[-+*\/^=]\|>=\|<=/
syntax region loopString start=/"/ skip=/\\./ end=/"\|$/
syntax match loopComment /#.*$/ contains=@Spell

highlight default link loopStatement Statement
highlight default link loopModifier Keyword
highlight default link loopMethod Function
highlight default link loopSign Constant
highlight default link loopMetric Identifier
highlight default link loopNumber Number
highlight default link loopUnit Type
highlight default link loopVariable Special
highlight default link loopOperator Operator
highlight default link loopString String
highlight default link loopComment Comment

let b:current_syntax = 'loop'
