package x
import _ "go.lsp.dev/protocol"
