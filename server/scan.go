package server

import (
	"context"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"

	"go.lsp.dev/protocol"
	"go.uber.org/zap"
)

// maxScanFiles bounds the start-up scan: a workspace with more .loop files
// than this is not one a person edits file by file, and the index is only
// for references and workspace symbols.
const maxScanFiles = 5000

var scanCount atomic.Int64

// startScan indexes the .loop files of the workspace folders in the
// background, reporting work-done progress when the client supports it.
func (s *Server) startScan() {
	s.mu.Lock()
	roots := append([]string(nil), s.ses.roots...)
	progress := s.ses.progress
	s.mu.Unlock()
	if len(roots) == 0 {
		return
	}
	go func() {
		defer func() {
			if r := recover(); r != nil {
				s.bug("panic in workspace scan: %v\n%s", r, debugStack())
			}
		}()
		s.scan(roots, progress)
	}()
}

func (s *Server) scan(roots []string, progress bool) {
	token := fmt.Sprintf("ringside-scan-%d", scanCount.Add(1))
	if progress {
		if err := s.call(s.ctx, protocol.MethodWorkDoneProgressCreate, &protocol.WorkDoneProgressCreateParams{Token: *protocol.NewProgressToken(token)}); err != nil {
			s.log.Debug("no progress token", zap.Error(err))
			progress = false
		}
	}
	report := func(v any) {
		if progress {
			s.notify(protocol.MethodProgress, &protocol.ProgressParams{Token: *protocol.NewProgressToken(token), Value: v})
		}
	}
	// ProgressToken marshals through a pointer method: pass pointers.
	report(&protocol.WorkDoneProgressBegin{Kind: protocol.WorkDoneProgressKindBegin, Title: "ringside: indexing .loop files"})
	var found []string
	for _, root := range roots {
		filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
			if err != nil || s.ctx.Err() != nil || len(found) >= maxScanFiles {
				if d != nil && d.IsDir() {
					return filepath.SkipDir
				}
				return nil
			}
			if d.IsDir() && p != root && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			if d.IsDir() || !strings.HasSuffix(p, ".loop") {
				return nil
			}
			// Only regular files (or links to them) are indexed: a FIFO
			// or a device would block or never end when read.
			if info, err := os.Stat(p); err != nil || !info.Mode().IsRegular() {
				s.log.Info("skipped: not a regular file", zap.String("path", p))
				return nil
			}
			found = append(found, filepath.Clean(p))
			return nil
		})
	}
	for i, p := range found {
		s.mu.Lock()
		s.ses.known[p] = true
		s.mu.Unlock()
		if (i+1)%50 == 0 || i == len(found)-1 {
			pct := uint32(100 * (i + 1) / len(found))
			report(&protocol.WorkDoneProgressReport{Kind: protocol.WorkDoneProgressKindReport, Message: fmt.Sprintf("%d/%d files", i+1, len(found)), Percentage: pct})
		}
	}
	report(&protocol.WorkDoneProgressEnd{Kind: protocol.WorkDoneProgressKindEnd, Message: fmt.Sprintf("%d .loop files", len(found))})
	s.log.Info("workspace scanned", zap.Int("files", len(found)))
	s.mu.Lock()
	s.scanned++
	s.mu.Unlock()
}

var _ = context.Background
