package conformance

import (
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"
)

// straceLine is one line of `strace -f -qq -o` output: "PID name(args) = ret".
var straceLine = regexp.MustCompile(`^(\d+)\s+([a-z0-9_]+)\((.*)$`)

// writeFlags are the open flags that let a process change a file.
var writeFlags = regexp.MustCompile(`O_WRONLY|O_RDWR|O_CREAT|O_TRUNC|O_APPEND`)

// changingCalls change the file system whatever their arguments.
var changingCalls = map[string]bool{
	"rename": true, "renameat": true, "renameat2": true, "unlink": true, "unlinkat": true,
	"mkdir": true, "mkdirat": true, "rmdir": true, "link": true, "linkat": true,
	"symlink": true, "symlinkat": true, "truncate": true, "chmod": true, "fchmodat": true,
	"chown": true, "lchown": true, "fchownat": true, "mknod": true, "mknodat": true,
	"creat": true, "utime": true, "utimes": true, "utimensat": true, "futimesat": true,
}

// networkCalls are the calls of %network that reach out or listen.
var networkCalls = map[string]bool{
	"socket": true, "connect": true, "bind": true, "listen": true, "accept": true, "accept4": true,
	"sendto": true, "sendmsg": true, "sendmmsg": true, "socketpair": true,
}

// TestNoWritesNoNetwork runs a whole session under strace and checks that
// the server opens no file for writing (other than /dev/null), changes
// nothing in the file system and makes no socket at all. No AF_UNIX
// allowance is needed: the Go runtime of a program that never uses package
// net makes no socket, and the server has no reason to.
func TestNoWritesNoNetwork(t *testing.T) {
	straceBin, err := exec.LookPath("strace")
	if err != nil {
		if os.Getenv("RINGSIDE_REQUIRE_STRACE") == "1" {
			t.Fatal("strace is required (RINGSIDE_REQUIRE_STRACE=1) but missing: apt-get install -y strace")
		}
		t.Skip("strace missing (apt-get install -y strace)")
	}
	src, err := os.ReadFile(filepath.Join(moduleRoot, "testdata", "demo", "conveyor.loop"))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	ws := filepath.Join(dir, "ws")
	if err := os.Mkdir(ws, 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(ws, "conveyor.loop")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "strace.log")
	p := start(t, ws, straceBin, "-f", "-qq", "-e", "trace=%file,%network", "-o", log)
	uri := fileURI(path)
	p.initialize(ws, map[string]any{"trigger": "change"})
	from := p.mark()
	p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": uri, "languageId": "loop", "version": 1, "text": string(src)}})
	if _, ok := p.diagnosticsFor(from, uri, 1, replyTimeout); !ok {
		t.Fatalf("no diagnostics (%s)", p.state())
	}
	// Lower kp's max so that a requirement fails and quick-fixes exist.
	from = p.mark()
	p.notify("textDocument/didChange", map[string]any{"textDocument": map[string]any{"uri": uri, "version": 2}, "contentChanges": []any{
		map[string]any{"range": map[string]any{"start": map[string]any{"line": 3, "character": 10}, "end": map[string]any{"line": 3, "character": 13}}, "text": "3.5"}}})
	pp, ok := p.diagnosticsFor(from, uri, 2, replyTimeout)
	if !ok {
		t.Fatalf("no diagnostics after the change (%s)", p.state())
	}
	p.notify("textDocument/didSave", map[string]any{"textDocument": map[string]any{"uri": uri}})
	doc := map[string]any{"uri": uri}
	p.mustCall("textDocument/hover", map[string]any{"textDocument": doc, "position": map[string]any{"line": 6, "character": 8}})
	diags := []any{}
	for _, d := range pp.Diagnostics {
		diags = append(diags, d)
	}
	p.mustCall("textDocument/codeAction", map[string]any{"textDocument": doc, "range": map[string]any{"start": map[string]any{"line": 0, "character": 0}, "end": map[string]any{"line": 17, "character": 0}}, "context": map[string]any{"diagnostics": diags}})
	p.mustCall("textDocument/formatting", map[string]any{"textDocument": doc, "options": map[string]any{"tabSize": 2, "insertSpaces": true}})
	p.mustCall("workspace/executeCommand", map[string]any{"command": "ringside.plot", "arguments": []any{map[string]any{"uri": uri, "write": false}}})
	p.shutdownExit()
	if err := p.waitExit(replyTimeout); err != nil {
		t.Fatal(err)
	}
	time.Sleep(50 * time.Millisecond)

	data, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	bad, calls := forbiddenCalls(string(data))
	for _, b := range bad {
		t.Error(b)
	}
	if calls == 0 {
		t.Fatalf("strace logged no call: the check proved nothing\n%s", data)
	}
	// The workspace holds exactly what the test put there.
	entries, err := os.ReadDir(ws)
	if err != nil || len(entries) != 1 {
		t.Errorf("workspace changed: %v %v", entries, err)
	}
	if now, _ := os.ReadFile(path); string(now) != string(src) {
		t.Errorf("conveyor.loop changed on disk")
	}
}

// forbiddenCalls scans an strace log and returns a message for every call
// that writes a file, changes the file system or uses the network, and the
// number of calls read. A call split by another thread's ("<unfinished
// ...>" then "<... resumed>") has its name and arguments on the first half,
// which the pattern matches; the resumed half holds only the result.
func forbiddenCalls(log string) (bad []string, calls int) {
	for _, line := range strings.Split(log, "\n") {
		m := straceLine.FindStringSubmatch(line)
		if m == nil {
			continue
		}
		calls++
		name, args := m[2], m[3]
		switch {
		case name == "open" || name == "openat" || name == "openat2" || name == "open_by_handle_at":
			if writeFlags.MatchString(args) && !strings.Contains(args, `"/dev/null"`) {
				bad = append(bad, "the server opened a file for writing: "+line)
			}
		case changingCalls[name]:
			bad = append(bad, "the server changed the file system: "+line)
		case networkCalls[name]:
			bad = append(bad, "the server used the network: "+line)
		}
	}
	return bad, calls
}

// TestForbiddenCalls checks the log scanner on lines of each kind.
func TestForbiddenCalls(t *testing.T) {
	log := `101 openat(AT_FDCWD, "/w/a.loop", O_RDONLY|O_CLOEXEC) = 3
101 openat(AT_FDCWD, "/dev/null", O_WRONLY|O_CLOEXEC) = 4
102 openat(AT_FDCWD, "/w/a.html", O_WRONLY|O_CREAT|O_TRUNC|O_CLOEXEC, 0666 <unfinished ...>
101 <... openat resumed>) = 5
101 renameat(AT_FDCWD, "/w/x", AT_FDCWD, "/w/y") = 0
101 socket(AF_INET, SOCK_STREAM|SOCK_CLOEXEC|SOCK_NONBLOCK, IPPROTO_IP) = 6
101 connect(6, {sa_family=AF_INET, sin_port=htons(80)}, 16) = 0
101 --- SIGURG {si_signo=SIGURG} ---
101 newfstatat(3, "", {st_mode=S_IFREG|0644}, AT_EMPTY_PATH) = 0
`
	bad, calls := forbiddenCalls(log)
	if calls != 7 || len(bad) != 4 {
		t.Fatalf("%d calls, forbidden %q; want 7 calls, 4 forbidden (a.html, renameat, socket, connect)", calls, bad)
	}
}
