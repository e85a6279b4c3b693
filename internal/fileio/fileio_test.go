package fileio

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"
)

func TestReadRegularRefusesFIFOWithoutBlocking(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.loop")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	done := make(chan error, 1)
	go func() { _, err := ReadRegular(fifo, 1<<20); done <- err }()
	select {
	case err := <-done:
		if !errors.Is(err, ErrNotRegular) {
			t.Fatalf("err = %v, want ErrNotRegular", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("reading a FIFO blocked")
	}
}

func TestReadRegularRefusesDevicesAndFolders(t *testing.T) {
	for _, p := range []string{"/dev/zero", t.TempDir()} {
		if _, err := os.Stat(p); err != nil {
			continue
		}
		if _, err := ReadRegular(p, 1<<20); !errors.Is(err, ErrNotRegular) {
			t.Errorf("%s: err = %v, want ErrNotRegular", p, err)
		}
	}
}

func TestReadRegularLimit(t *testing.T) {
	p := filepath.Join(t.TempDir(), "big.loop")
	os.WriteFile(p, make([]byte, 101), 0o644)
	if _, err := ReadRegular(p, 100); !errors.Is(err, ErrTooLarge) {
		t.Fatalf("101 bytes with limit 100: err = %v", err)
	}
	if b, err := ReadRegular(p, 101); err != nil || len(b) != 101 {
		t.Fatalf("101 bytes with limit 101: %d bytes, %v", len(b), err)
	}
}

func TestWriteAtomicKeepsModeAndRefusesLinks(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.loop")
	os.WriteFile(p, []byte("old"), 0o640)
	os.Chmod(p, 0o640)
	if err := WriteAtomic(p, []byte("new"), 0o600); err != nil {
		t.Fatal(err)
	}
	info, _ := os.Stat(p)
	if b, _ := os.ReadFile(p); string(b) != "new" || info.Mode().Perm() != 0o640 {
		t.Fatalf("got %q mode %v, want \"new\" mode 0640", b, info.Mode().Perm())
	}
	outside := filepath.Join(t.TempDir(), "victim")
	os.WriteFile(outside, []byte("keep"), 0o644)
	link := filepath.Join(dir, "page.html")
	if err := os.Symlink(outside, link); err != nil {
		t.Skip(err)
	}
	if err := WriteAtomic(link, []byte("x"), 0o644); !errors.Is(err, ErrNotRegular) {
		t.Fatalf("write through a link: err = %v", err)
	}
	if b, _ := os.ReadFile(outside); string(b) != "keep" {
		t.Fatalf("the link's target was overwritten: %q", b)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Fatalf("temporary files left behind: %v", entries)
	}
}

func TestWriteAtomicLeavesOldFileOnFailure(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.loop")
	os.WriteFile(p, []byte("old text"), 0o644)
	os.Chmod(dir, 0o500) // the temporary file cannot be created
	defer os.Chmod(dir, 0o700)
	if os.Geteuid() == 0 {
		t.Skip("root ignores folder permissions")
	}
	if err := WriteAtomic(p, []byte("new"), 0o644); err == nil {
		t.Fatal("write into a read-only folder succeeded")
	}
	if b, _ := os.ReadFile(p); string(b) != "old text" {
		t.Fatalf("old file damaged: %q", b)
	}
}
