package export

import (
	"fmt"
	"path/filepath"
	"strings"

	"ringside/internal/fileio"
)

// WriteFile writes data to path atomically (fileio.WriteAtomic: a temporary
// file in the same folder, then a rename; an existing path must be a
// regular file), and only inside root: the path, with its folder's symbolic
// links resolved, must lie below root.
func WriteFile(root, path string, data []byte) error {
	rootAbs, err := filepath.EvalSymlinks(root)
	if err != nil {
		return err
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return err
	}
	dir, err := filepath.EvalSymlinks(filepath.Dir(abs))
	if err != nil {
		return err
	}
	target := filepath.Join(dir, filepath.Base(abs))
	if rel, err := filepath.Rel(rootAbs, target); err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) {
		return fmt.Errorf("%s is outside the working folder %s", path, root)
	}
	return fileio.WriteAtomic(target, data, 0o644)
}
