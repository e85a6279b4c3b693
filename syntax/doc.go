// Package syntax reads .loop files: it lexes, parses into the tree of
// ast.go, maps byte offsets to lines and columns (pos.go), and prints the
// canonical layout (format.go). It imports only the standard library and
// knows nothing of analysis or the editor protocol.
//
// # Contract
//
// Parse never fails: it returns a tree for every input, with BadStmt,
// BadItem and BadExpr where text could not be read, and an ErrorList in
// source order whose entries carry the exact span of the offending token
// (an empty span at the end of the line when something is missing there).
// The parser checks shape only; which methods, metrics, sign values and
// units exist is for analysis to say.
//
// # Choices where the format page is silent
//
//   - A leading byte order mark is part of nothing: it is skipped, and
//     line 1, column 1 is the first character after it. Space and tab are
//     blanks; "\n", "\r\n" and a lone "\r" each end a line (as in LSP
//     3.17), so CRLF and CR files read like LF files.
//   - Inside '(' ... ')' line breaks are blanks, except that a line starting
//     with a statement keyword (sample, use, gain, block, loop, realize) or
//     with '}' closes the statement, so a missing ')' costs one error.
//   - Keywords are context words: via, prewarp, min, max, vary, to and the statement
//     and item keywords are ordinary names elsewhere. The only reserved
//     names are s and z, which no gain, block or loop may be called. In an
//     expression via ends the expression instead of multiplying.
//   - Any number may carry a minus (sample, prewarp, min, max, vary, require);
//     analysis rejects what makes no sense.
//   - A unit is any name, "µs" (U+00B5 or U+03BC), "%", or two names joined
//     by '/' ("rad/s"). A number alone where a unit belongs is read with
//     Unit "" (analysis reports it).
//   - Exponents are written in digits (z^2, z^-1, z^(-1)); '^' does not
//     chain. See MaxExponent and MaxExprDepth for the limits.
//   - Strings have no escapes and end at the line's end.
//   - realize BLOCK as STRUCTURE in FORMAT: as and in are context words; a
//     format such as q1.14 lexes as the name q1 and the number .14 and is
//     one format when written without a blank between them. Which
//     structures and formats exist is for analysis to say.
//   - A loop body runs to its '}'; a line starting a top-level statement, or
//     the end of the file, ends a loop whose '}' is missing.
package syntax
