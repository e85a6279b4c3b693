// Package fileio is the one way ringside reads and writes a user's files.
// Reads open only regular files, never block (a FIFO or a device is
// refused, not waited on) and stop at a size limit before reading past it.
// Writes are atomic: a temporary file beside the target, synced, then
// renamed over it, the target's mode kept; a target that is not a regular
// file (a symbolic link, a FIFO, a device, a folder) is refused, so no
// write ever goes through a link.
package fileio

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"syscall"
)

// ErrNotRegular is wrapped by the errors for anything but a regular file.
var ErrNotRegular = errors.New("not a regular file")

// ErrTooLarge is wrapped by the error for a file over the read limit.
var ErrTooLarge = errors.New("file too large")

// kind names a file mode's type for messages.
func kind(m fs.FileMode) string {
	switch {
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	case m.IsDir():
		return "a folder"
	case m&fs.ModeNamedPipe != 0:
		return "a FIFO"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeDevice != 0:
		return "a device"
	}
	return "not a regular file"
}

// NotRegularError says what a path is instead of a regular file.
func NotRegularError(m fs.FileMode) error {
	return fmt.Errorf("%w (it is %s; only regular files are read or written)", ErrNotRegular, kind(m))
}

// ReadRegular returns the contents of the regular file at path (links
// followed), or an error: not a regular file, or over limit bytes. The
// file is opened without blocking (O_NONBLOCK), checked with fstat, and
// read through a reader that stops at limit+1 bytes, so neither a FIFO
// nor /dev/zero can hold or exhaust the caller.
func ReadRegular(path string, limit int64) ([]byte, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	info, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if !info.Mode().IsRegular() {
		return nil, NotRegularError(info.Mode())
	}
	if info.Size() > limit {
		return nil, tooLarge(info.Size(), limit)
	}
	data, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, err
	}
	if int64(len(data)) > limit { // it grew after the fstat
		return nil, tooLarge(int64(len(data)), limit)
	}
	return data, nil
}

func tooLarge(size, limit int64) error {
	return fmt.Errorf("%w: %d bytes or more, over the limit of %d", ErrTooLarge, size, limit)
}

// WriteAtomic replaces path with data: a new temporary file in the same
// folder is written, synced and renamed over path, so a failure half-way
// (disk full, a size limit) leaves the old file whole. An existing path
// keeps its permission bits; a new one gets perm. A path that exists and
// is not a regular file is refused (Lstat: a symbolic link is refused, not
// followed).
func WriteAtomic(path string, data []byte, perm fs.FileMode) (err error) {
	if info, err := os.Lstat(path); err == nil {
		if !info.Mode().IsRegular() {
			return &fs.PathError{Op: "write", Path: path, Err: NotRegularError(info.Mode())}
		}
		perm = info.Mode().Perm()
	} else if !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if _, err = tmp.Write(data); err != nil {
		return err
	}
	if err = tmp.Chmod(perm); err != nil {
		return err
	}
	if err = tmp.Sync(); err != nil {
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	// The rename is durable once the folder is synced; a folder that
	// cannot be opened or synced (some file systems) does not undo it.
	if d, derr := os.Open(dir); derr == nil {
		d.Sync()
		d.Close()
	}
	return nil
}
