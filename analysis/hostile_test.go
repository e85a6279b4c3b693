package analysis

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"ringside/syntax"
)

// A file of junk yields at most MaxDiagnostics diagnostics plus one that
// counts the rest, and the cap never hides an error.
func TestDiagnosticCap(t *testing.T) {
	var b strings.Builder
	b.WriteString("sample 1 ms\n")
	for i := range 3000 {
		fmt.Fprintf(&b, "gain g%d = 5 max 1\n", i) // each one out of range: an error
	}
	r := checkSrc(t, b.String(), nil)
	if len(r.Diagnostics) != MaxDiagnostics+1 {
		t.Fatalf("%d diagnostics, want %d", len(r.Diagnostics), MaxDiagnostics+1)
	}
	last := r.Diagnostics[MaxDiagnostics]
	if last.Code != CodeTooMany || last.Severity != Error || !strings.Contains(last.Message, "more") {
		t.Fatalf("last diagnostic %+v", last)
	}
	junk := strings.Repeat("@#\n$", 100000)
	r = checkSrc(t, junk, nil)
	if len(r.Diagnostics) > syntax.MaxErrors+2 {
		t.Fatalf("junk gave %d diagnostics", len(r.Diagnostics))
	}
}

// Sample periods outside 1 ns .. 1 day are refused with the value as
// written, never half-analysed (`sample 1e30 s` used to lose the
// numerator of every continuous block and call the loop stable).
func TestSamplePeriodRange(t *testing.T) {
	for _, c := range []struct {
		sample string
		ok     bool
	}{
		{"1e30 s", false}, {"1e5 s", false}, {"5e-10 s", false}, {"2000000 kHz", false}, {"1e-6 Hz", false},
		{"-2.5 ms", false}, {"1 us", true}, {"86400 s", true}, {"1 kHz", true}, {"1e-9 s", true},
	} {
		src := "sample " + c.sample + "\nblock p = 1/(s+1) via zoh\nloop l {\n  forward p\n}\n"
		r := checkSrc(t, src, nil)
		var d *Diagnostic
		for i := range r.Diagnostics {
			if x := &r.Diagnostics[i]; x.Severity == Error && x.Span.From >= 7 && x.Span.To <= syntax.Pos(7+len(c.sample)) {
				d = x
			}
		}
		if c.ok != (d == nil) {
			t.Errorf("sample %s: accepted %v, want %v (%v)", c.sample, d == nil, c.ok, r.Diagnostics)
			continue
		}
		if d != nil && d.Code == CodeBadUnit && !strings.Contains(d.Message, c.sample) {
			t.Errorf("sample %s: message does not quote the value as written: %s", c.sample, d.Message)
		}
	}
}

// A requirement whose value is not finite once converted is an error, never
// a non-finite figure that the JSON encoder cannot write.
func TestRequireNotFinite(t *testing.T) {
	r := checkSrc(t, "sample 10 s\nblock p = 0.5/(z-0.5)\nloop l {\n  forward p\n  require settling <= 1e308 samples\n}\n", nil)
	if d := findDiag(r, CodeBadUnit); d == nil || !strings.Contains(d.Message, "1e308 samples") {
		t.Fatalf("no bad-unit error quoting the value: %v", r.Diagnostics)
	}
	for _, q := range r.Loops[0].Requirements {
		if q.Want > 1e300 || q.Want != q.Want {
			t.Fatalf("requirement kept with want %v", q.Want)
		}
	}
}

// A `use` of a FIFO or a device inside the workspace is refused at once
// with what it is, instead of blocking or reading without end.
func TestUseNonRegular(t *testing.T) {
	dir := t.TempDir()
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe.loop"), 0o644); err != nil {
		t.Skipf("no FIFOs: %v", err)
	}
	zero := filepath.Join(dir, "zero.loop")
	if err := os.Symlink("/dev/zero", zero); err != nil {
		t.Skip(err)
	}
	src := "use \"pipe.loop\"\nuse \"zero.loop\"\nsample 1 ms\n"
	done := make(chan *Result, 1)
	go func() {
		done <- Check(context.Background(), filepath.Join(dir, "main.loop"), []byte(src), Env{Roots: []string{"/"}})
	}()
	select {
	case r := <-done:
		var msgs []string
		for _, d := range r.Diagnostics {
			if d.Code == CodeUseNotFound {
				msgs = append(msgs, d.Message)
			}
		}
		all := strings.Join(msgs, "\n")
		if len(msgs) != 2 || !strings.Contains(all, "FIFO") || !strings.Contains(all, "device") {
			t.Fatalf("diagnostics: %s", all)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("a use of a FIFO or /dev/zero did not return")
	}
}

// Messages quote the user's numbers as written, sign and exponent kept.
func TestMessagesQuoteAsWritten(t *testing.T) {
	r := checkSrc(t, "sample -2.5 ms\ngain k = 1e-3 max 5e-4\ngain j = 1 min 2.50 max -1\n", nil)
	want := map[string]string{CodeBadUnit: "-2.5 ms", CodeGainRange: "1e-3 is above its declared max 5e-4", CodeGainRangeEmpty: "min 2.50 above max -1"}
	for code, text := range want {
		if d := findDiag(r, code); d == nil || !strings.Contains(d.Message, text) {
			t.Errorf("%s: %v, want a message quoting %q", code, d, text)
		}
	}
}
