package server

import (
	"context"
	"encoding/json"

	"go.lsp.dev/jsonrpc2"

	"ringside/server/lspext"
)

// documentText answers ringside/documentText with the server's copy of an
// open document: the text every change so far has produced, and its
// version. It reads the session on the read loop, so it sees exactly the
// changes sent before it. A document that is not open (or a URI that is not
// a file) is InvalidParams.
func (s *Server) documentText(ctx context.Context, params json.RawMessage) (any, error) {
	var p lspext.DocumentTextParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	path, err := uriPath(p.URI)
	if err != nil {
		return nil, errorf(jsonrpc2.InvalidParams, "%v", err)
	}
	s.mu.Lock()
	d, ok := s.ses.docs[path]
	s.mu.Unlock()
	if !ok {
		return nil, errorf(jsonrpc2.InvalidParams, "%s is not open", p.URI)
	}
	return lspext.DocumentText{URI: d.uri, Version: d.version, Text: string(d.text)}, nil
}
