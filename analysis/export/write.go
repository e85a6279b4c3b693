package export

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// WriteFile writes data to path atomically (a temporary file in the same
// folder, then a rename), and only inside root: the path, with its folder's
// symbolic links resolved, must lie below root. An existing path must be a
// regular file.
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
	if fi, err := os.Lstat(target); err == nil && !fi.Mode().IsRegular() {
		return fmt.Errorf("%s exists and is not a regular file", path)
	}
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(abs)+".*.tmp")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), target)
}
