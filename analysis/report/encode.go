package report

import (
	"errors"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"sync"
	"unicode/utf8"

	"ringside/internal/par"
)

// The contract's JSON is written by hand, field by field, in the order
// and with the rules of encoding/json (its float and string forms, null
// for nil pointers and slices, omitempty, map keys sorted): the same
// bytes, without reflection or a value per field. Tests compare both on
// the demo files and on values with every field set.

// errNotFinite is the error of a NaN or infinite float, which JSON cannot
// hold (encoding/json refuses it too).
var errNotFinite = errors.New("json: a figure is NaN or infinite")

// jw appends JSON to a buffer and keeps the first error. With out set,
// the buffer is written out whenever it passes spillSize between two
// elements of a list, so that a file's report is never held whole.
type jw struct {
	b   []byte
	err error
	out io.Writer
}

// spillSize is how much JSON a jw holds before it writes to out.
const spillSize = 32 << 10

func (w *jw) spill() {
	if w.out == nil || len(w.b) < spillSize {
		return
	}
	if _, err := w.out.Write(w.b); err != nil && w.err == nil {
		w.err = err
	}
	w.b = w.b[:0]
}

// key writes `"name":` after a comma unless first.
func (w *jw) key(name string, first bool) {
	if !first {
		w.b = append(w.b, ',')
	}
	w.b = append(w.b, '"')
	w.b = append(w.b, name...)
	w.b = append(w.b, '"', ':')
}

func (w *jw) num(f float64) {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		if w.err == nil {
			w.err = errNotFinite
		}
		w.b = append(w.b, '0')
		return
	}
	w.b = appendFloat(w.b, f)
}

// appendFloat writes f as encoding/json does: shortest form, exponent
// only below 1e-6 or from 1e21 on, exponent without a leading zero.
func appendFloat(b []byte, f float64) []byte {
	abs := math.Abs(f)
	format := byte('f')
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		n := len(b)
		if n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

func (w *jw) numPtr(p *float64) {
	if p == nil {
		w.b = append(w.b, "null"...)
		return
	}
	w.num(*p)
}

func (w *jw) boolean(v bool) { w.b = strconv.AppendBool(w.b, v) }

func (w *jw) boolPtr(p *bool) {
	if p == nil {
		w.b = append(w.b, "null"...)
		return
	}
	w.boolean(*p)
}

func (w *jw) integer(n int) { w.b = strconv.AppendInt(w.b, int64(n), 10) }

const hexDigits = "0123456789abcdef"

// str writes s quoted as encoding/json does without HTML escapes: control
// characters escaped, invalid UTF-8 as U+FFFD, U+2028 and U+2029 escaped.
func (w *jw) str(s string) {
	b := append(w.b, '"')
	start := 0
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			if c >= 0x20 && c != '"' && c != '\\' {
				i++
				continue
			}
			b = append(b, s[start:i]...)
			switch c {
			case '\\', '"':
				b = append(b, '\\', c)
			case '\b':
				b = append(b, '\\', 'b')
			case '\f':
				b = append(b, '\\', 'f')
			case '\n':
				b = append(b, '\\', 'n')
			case '\r':
				b = append(b, '\\', 'r')
			case '\t':
				b = append(b, '\\', 't')
			default:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xF])
			}
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
		case r == '\u2028' || r == '\u2029':
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigits[r&0xF])
		default:
			i += size
			continue
		}
		i += size
		start = i
	}
	b = append(b, s[start:]...)
	w.b = append(b, '"')
}

// list writes n elements with each(i), or null when the slice is nil.
func (w *jw) list(isNil bool, n int, each func(i int)) {
	if isNil {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = append(w.b, '[')
	for i := 0; i < n; i++ {
		if i > 0 {
			w.b = append(w.b, ',')
		}
		each(i)
		w.spill()
	}
	w.b = append(w.b, ']')
}

func (w *jw) nums(v []float64) {
	w.list(v == nil, len(v), func(i int) { w.num(v[i]) })
}

func (w *jw) strs(v []string) {
	w.list(v == nil, len(v), func(i int) { w.str(v[i]) })
}

// sortedKeys returns a map's keys in encoding/json's order.
func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// object writes a map with sorted keys, or null when it is nil.
func object[V any](w *jw, m map[string]V, value func(V)) {
	if m == nil {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = append(w.b, '{')
	for i, k := range sortedKeys(m) {
		if i > 0 {
			w.b = append(w.b, ',')
		}
		w.str(k)
		w.b = append(w.b, ':')
		value(m[k])
	}
	w.b = append(w.b, '}')
}

func (w *jw) file(f *File) {
	w.b = append(w.b, '{')
	w.key("path", true)
	w.str(f.Path)
	w.key("sample_s", false)
	w.numPtr(f.SampleS)
	w.key("diagnostics", false)
	w.chunked(f.Diagnostics == nil, len(f.Diagnostics), 512, func(p *jw, i int) { p.diagnostic(&f.Diagnostics[i]) })
	w.key("loops", false)
	w.loops(f.Loops)
	w.key("gains", false)
	w.chunked(f.Gains == nil, len(f.Gains), 256, func(p *jw, i int) { p.gain(&f.Gains[i]) })
	w.key("blocks", false)
	w.chunked(f.Blocks == nil, len(f.Blocks), 512, func(p *jw, i int) { p.block(&f.Blocks[i]) })
	w.b = append(w.b, '}')
}

// position writes the four position fields that open a diagnostic or an
// edit ("line", "column", "end_line", "end_column").
func (w *jw) position(line, col, endLine, endCol int, first bool) {
	w.key("line", first)
	w.integer(line)
	w.key("column", false)
	w.integer(col)
	w.key("end_line", false)
	w.integer(endLine)
	w.key("end_column", false)
	w.integer(endCol)
}

func (w *jw) diagnostic(d *Diagnostic) {
	w.b = append(w.b, '{')
	w.position(d.Line, d.Column, d.EndLine, d.EndColumn, true)
	w.key("severity", false)
	w.str(d.Severity)
	w.key("code", false)
	w.str(d.Code)
	w.key("message", false)
	w.str(d.Message)
	if len(d.Fixes) > 0 {
		w.key("fixes", false)
		w.list(false, len(d.Fixes), func(i int) { w.fix(&d.Fixes[i]) })
	}
	w.b = append(w.b, '}')
}

func (w *jw) fix(f *Fix) {
	w.b = append(w.b, '{')
	w.key("title", true)
	w.str(f.Title)
	w.key("edits", false)
	w.list(f.Edits == nil, len(f.Edits), func(i int) {
		e := &f.Edits[i]
		w.b = append(w.b, '{')
		w.key("path", true)
		w.str(e.Path)
		w.position(e.Line, e.Column, e.EndLine, e.EndColumn, false)
		w.key("new_text", false)
		w.str(e.NewText)
		w.b = append(w.b, '}')
	})
	w.b = append(w.b, '}')
}

func (w *jw) loop(l *Loop) {
	w.b = append(w.b, '{')
	w.key("name", true)
	w.str(l.Name)
	w.key("stable", false)
	w.boolPtr(l.Stable)
	w.key("marginal", false)
	w.boolean(l.Marginal)
	w.key("analysed", false)
	w.boolean(l.Analysed)
	w.key("poles", false)
	w.poles(l.Poles)
	for _, f := range []struct {
		name string
		v    *float64
	}{
		{"max_radius", l.MaxRadius}, {"min_damping", l.MinDamping},
		{"gain_margin_db", l.GainMarginDB}, {"phase_crossover_hz", l.PhaseCrossoverHz},
		{"phase_margin_deg", l.PhaseMarginDeg}, {"gain_crossover_hz", l.GainCrossoverHz},
		{"delay_margin_s", l.DelayMarginS}, {"delay_margin_samples", l.DelayMarginSamples},
		{"peak_sensitivity_db", l.PeakSensitivityDB}, {"overshoot_pct", l.OvershootPct},
		{"rise_s", l.RiseS}, {"settling_s", l.SettlingS}, {"steady_state_error", l.SteadyStateError},
	} {
		w.key(f.name, false)
		w.numPtr(f.v)
	}
	w.key("hidden_modes", false)
	w.list(l.HiddenModes == nil, len(l.HiddenModes), func(i int) { w.hidden(&l.HiddenModes[i]) })
	w.key("requirements", false)
	w.list(l.Requirements == nil, len(l.Requirements), func(i int) { w.requirement(&l.Requirements[i]) })
	w.key("verdict", false)
	w.str(l.Verdict)
	w.key("disk_margin", false)
	w.diskMargin(l.DiskMargin)
	if l.Robust != nil {
		w.key("robust", false)
		w.robust(l.Robust)
	}
	if l.Realized != nil {
		w.key("realized", false)
		w.realizedLoop(l.Realized)
	}
	w.b = append(w.b, '}')
}

// loopChunk is how many elements (loops, diagnostics, gains, blocks) one
// goroutine encodes at a time.
const loopChunk = 128

// loopJSONBytes is a generous size of one loop's JSON (a third-order loop
// with its poles, margins, step figures, requirements and disk margin
// takes about 3.5 KB).
const loopJSONBytes = 4 << 10

// loops writes the loops list (chunked).
func (w *jw) loops(ls []Loop) {
	w.chunked(ls == nil, len(ls), loopJSONBytes, func(p *jw, i int) { p.loop(&ls[i]) })
}

// chunked writes a list of n elements, or null when isNil, with one(p, i)
// writing element i into p; a long list is encoded in chunks of
// loopChunk side by side, each into a buffer of its own sized for
// about perItem bytes an element, and written in order (the same bytes
// as one pass).
func (w *jw) chunked(isNil bool, n, perItem int, one func(p *jw, i int)) {
	if isNil || n < 2*loopChunk {
		w.list(isNil, n, func(i int) { one(w, i) })
		return
	}
	parts := make([]jw, (n+loopChunk-1)/loopChunk)
	par.Each(len(parts), func(k int) {
		p := &parts[k]
		from, to := k*loopChunk, min((k+1)*loopChunk, n)
		// Sized for the chunk up front: grown by doubling, a chunk's
		// buffer would be allocated and copied several times over.
		p.b = slices.Grow(partBufs.get(), (to-from)*perItem)
		for i := from; i < to; i++ {
			if i > from {
				p.b = append(p.b, ',')
			}
			one(p, i)
		}
	})
	w.b = append(w.b, '[')
	for k := range parts {
		if k > 0 {
			w.b = append(w.b, ',')
		}
		if w.err == nil {
			w.err = parts[k].err
		}
		w.b = append(w.b, parts[k].b...)
		partBufs.put(parts[k].b)
		w.spill()
	}
	w.b = append(w.b, ']')
}

// partBufs keeps the chunks' buffers between files and runs.
var partBufs = bufPool{sync.Pool{New: func() any { return new([]byte) }}}

type bufPool struct{ sync.Pool }

func (p *bufPool) get() []byte { return (*p.Get().(*[]byte))[:0] }

func (p *bufPool) put(b []byte) {
	if cap(b) <= 1<<20 {
		p.Put(&b)
	}
}

func (w *jw) poles(ps []Pole) {
	w.list(ps == nil, len(ps), func(i int) { w.pole(&ps[i]) })
}

func (w *jw) pole(p *Pole) {
	w.b = append(w.b, '{')
	w.key("re", true)
	w.num(p.Re)
	w.key("im", false)
	w.num(p.Im)
	w.key("radius", false)
	w.num(p.Radius)
	w.key("angle_rad", false)
	w.num(p.AngleRad)
	w.key("freq_hz", false)
	w.num(p.FreqHz)
	w.key("damping", false)
	w.num(p.Damping)
	w.key("natural_hz", false)
	w.numPtr(p.NaturalHz)
	w.key("time_constant_s", false)
	w.numPtr(p.TimeConstantS)
	w.key("shape", false)
	w.str(p.Shape)
	w.b = append(w.b, '}')
}

func (w *jw) hidden(h *HiddenMode) {
	w.b = append(w.b, '{')
	w.key("re", true)
	w.num(h.Re)
	w.key("im", false)
	w.num(h.Im)
	w.key("radius", false)
	w.num(h.Radius)
	w.key("pole_block", false)
	w.str(h.PoleBlock)
	w.key("zero_block", false)
	w.str(h.ZeroBlock)
	w.b = append(w.b, '}')
}

func (w *jw) requirement(q *Requirement) {
	w.b = append(w.b, '{')
	w.key("metric", true)
	w.str(q.Metric)
	w.key("op", false)
	w.str(q.Op)
	w.key("want", false)
	w.num(q.Want)
	w.key("got", false)
	w.numPtr(q.Got)
	w.key("met", false)
	w.boolean(q.Met)
	w.key("default", false)
	w.boolean(q.Default)
	w.b = append(w.b, '}')
}

func (w *jw) diskMargin(d *DiskMargin) {
	if d == nil {
		w.b = append(w.b, "null"...)
		return
	}
	w.b = append(w.b, '{')
	w.key("alpha", true)
	w.num(d.Alpha)
	w.key("gain_low_db", false)
	w.numPtr(d.GainLowDB)
	w.key("gain_high_db", false)
	w.numPtr(d.GainHighDB)
	w.key("phase_deg", false)
	w.num(d.PhaseDeg)
	w.key("peak_hz", false)
	w.num(d.PeakHz)
	w.b = append(w.b, '}')
}

func (w *jw) robust(r *Robust) {
	w.b = append(w.b, '{')
	w.key("stable", true)
	w.boolPtr(r.Stable)
	w.key("method", false)
	w.str(r.Method)
	w.key("exact", false)
	w.boolean(r.Exact)
	if r.Why != "" {
		w.key("why", false)
		w.str(r.Why)
	}
	w.key("ranges", false)
	object(w, r.Ranges, func(v [2]float64) {
		w.b = append(w.b, '[')
		w.num(v[0])
		w.b = append(w.b, ',')
		w.num(v[1])
		w.b = append(w.b, ']')
	})
	w.key("worst", false)
	if r.Worst == nil {
		w.b = append(w.b, "null"...)
	} else {
		w.b = append(w.b, '{')
		w.key("values", true)
		object(w, r.Worst.Values, w.num)
		w.key("max_radius", false)
		w.numPtr(r.Worst.MaxRadius)
		w.key("gain_margin_db", false)
		w.numPtr(r.Worst.GainMarginDB)
		w.key("phase_margin_deg", false)
		w.numPtr(r.Worst.PhaseMarginDeg)
		w.b = append(w.b, '}')
	}
	if len(r.IllPosedAt) > 0 {
		w.key("ill_posed_at", false)
		object(w, r.IllPosedAt, w.num)
	}
	if r.NominalOnly {
		w.key("nominal_only", false)
		w.boolean(true)
	}
	w.b = append(w.b, '}')
}

func (w *jw) realizedLoop(r *RealizedLoop) {
	w.b = append(w.b, '{')
	w.key("stable", true)
	w.boolPtr(r.Stable)
	w.key("max_radius", false)
	w.numPtr(r.MaxRadius)
	w.key("gain_margin_db", false)
	w.numPtr(r.GainMarginDB)
	w.key("phase_margin_deg", false)
	w.numPtr(r.PhaseMarginDeg)
	w.key("blocks", false)
	w.strs(r.Blocks)
	w.b = append(w.b, '}')
}

func (w *jw) gain(g *Gain) {
	w.b = append(w.b, '{')
	w.key("name", true)
	w.str(g.Name)
	w.key("value", false)
	w.num(g.Value)
	w.key("stable_min", false)
	w.numPtr(g.StableMin)
	w.key("stable_max", false)
	w.numPtr(g.StableMax)
	w.key("safe_max", false)
	w.numPtr(g.SafeMax)
	w.key("exact", false)
	w.boolean(g.Exact)
	w.key("current_stable", false)
	w.boolPtr(g.CurrentStable)
	w.key("loops", false)
	w.strs(g.Loops)
	w.b = append(w.b, '}')
}

func (w *jw) block(b *Block) {
	w.b = append(w.b, '{')
	w.key("name", true)
	w.str(b.Name)
	if b.Method != "" {
		w.key("method", false)
		w.str(b.Method)
	}
	w.key("num", false)
	w.nums(b.Num)
	w.key("den", false)
	w.nums(b.Den)
	w.key("poles", false)
	w.poles(b.Poles)
	w.key("zeros", false)
	w.poles(b.Zeros)
	w.key("dc_gain", false)
	w.numPtr(b.DCGain)
	if b.Realization != nil {
		w.key("realization", false)
		w.realization(b.Realization)
	}
	w.b = append(w.b, '}')
}

func (w *jw) realization(r *Realization) {
	w.b = append(w.b, '{')
	w.key("structure", true)
	w.str(r.Structure)
	w.key("format", false)
	w.str(r.Format)
	w.key("coefficients", false)
	w.list(r.Coefficients == nil, len(r.Coefficients), func(i int) { w.nums(r.Coefficients[i]) })
	w.key("poles", false)
	w.poles(r.Poles)
	w.key("max_pole_shift", false)
	w.num(r.MaxPoleShift)
	w.key("stable", false)
	w.boolean(r.Stable)
	if r.Delta != nil {
		w.key("delta", false)
		w.num(*r.Delta)
	}
	w.key("max_input", false)
	w.numPtr(r.MaxInput)
	w.b = append(w.b, '}')
}

// AppendJSON appends f as compact JSON, byte for byte what encoding/json
// writes for it (without HTML escapes); the error is that of a NaN or
// infinite figure.
func (f *File) AppendJSON(b []byte) ([]byte, error) {
	w := jw{b: b}
	w.file(f)
	return w.b, w.err
}

// writeJSON writes f as AppendJSON encodes it, to out through buf, a piece
// at a time; it returns buf for reuse.
func (f *File) writeJSON(out io.Writer, buf []byte) ([]byte, error) {
	w := jw{b: buf[:0], out: out}
	w.file(f)
	if w.err == nil {
		_, w.err = out.Write(w.b)
	}
	return w.b, w.err
}
