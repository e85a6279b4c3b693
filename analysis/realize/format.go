package realize

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Kind is the arithmetic a realization runs in.
type Kind int

const (
	Float64 Kind = iota
	Float32
	Fixed
)

// Format is the number format of coefficients and signals.
type Format struct {
	Kind Kind
	// M integer bits (sign not counted) and N fraction bits of a Fixed
	// format: a word of 1 + M + N bits.
	M, N int
}

// MaxWord is the widest fixed-point word (bits, sign included): the
// accumulator is 64 bits.
const MaxWord = 64

// ParseFormat reads float64, float32, qM.N, or qN (= q0.N, so q15 is
// q0.15 and q31 is q0.31).
func ParseFormat(s string) (Format, error) {
	switch s {
	case "float64":
		return Format{Kind: Float64}, nil
	case "float32":
		return Format{Kind: Float32}, nil
	}
	rest, ok := strings.CutPrefix(s, "q")
	if !ok || rest == "" {
		return Format{}, fmt.Errorf("unknown format %q (want float64, float32 or qM.N, e.g. q1.14)", s)
	}
	mText, nText, dotted := strings.Cut(rest, ".")
	if !dotted {
		mText, nText = "0", rest
	}
	m, err1 := bits(mText)
	n, err2 := bits(nText)
	if err1 != nil || err2 != nil {
		return Format{}, fmt.Errorf("format %q is not qM.N with M and N whole numbers of bits (e.g. q1.14, q15)", s)
	}
	f := Format{Kind: Fixed, M: m, N: n}
	if f.Word() > MaxWord {
		return Format{}, fmt.Errorf("format %s needs a word of %d bits (1 sign + %d integer + %d fraction); at most %d fit the 64-bit accumulator", s, f.Word(), m, n, MaxWord)
	}
	return f, nil
}

func bits(s string) (int, error) {
	if s == "" || strings.TrimLeft(s, "0123456789") != "" || len(s) > 3 {
		return 0, fmt.Errorf("not a bit count")
	}
	return strconv.Atoi(s)
}

// Word is the number of bits of a fixed-point word, 0 for floating point.
func (f Format) Word() int {
	if f.Kind != Fixed {
		return 0
	}
	return 1 + f.M + f.N
}

func (f Format) String() string {
	switch f.Kind {
	case Float64:
		return "float64"
	case Float32:
		return "float32"
	}
	return fmt.Sprintf("q%d.%d", f.M, f.N)
}

// Quantum is the value of one least significant bit (2^-N); 0 for floats.
func (f Format) Quantum() float64 {
	if f.Kind != Fixed {
		return 0
	}
	return math.Ldexp(1, -f.N)
}

// RawMin and RawMax are the ends of a fixed-point word: −2^(W−1) and
// 2^(W−1) − 1.
func (f Format) RawMin() int64 { return -1 << (f.Word() - 1) }
func (f Format) RawMax() int64 { return 1<<(f.Word()-1) - 1 }

// MaxValue is the largest magnitude a signal may have: 2^M for fixed point
// (the negative end; the positive end is one quantum less), the largest
// finite number for floats.
func (f Format) MaxValue() float64 {
	switch f.Kind {
	case Float64:
		return math.MaxFloat64
	case Float32:
		return math.MaxFloat32
	}
	return math.Ldexp(1, f.M)
}

// RangeError is a coefficient that the format cannot hold.
type RangeError struct {
	Name  string  // e.g. "a1 of section 2"
	Value float64 // the ideal value
	// NeedM is the smallest number of integer bits that holds the rounded
	// value with the same fraction bits; -1 when no fixed format can (or
	// for float32, whose range it exceeds).
	NeedM  int
	Format Format
}

func (e *RangeError) Error() string {
	if e.Format.Kind == Float32 {
		return fmt.Sprintf("coefficient %s = %g is outside the float32 range (±3.4e38)", e.Name, e.Value)
	}
	if e.NeedM < 0 || 1+e.NeedM+e.Format.N > MaxWord {
		return fmt.Sprintf("coefficient %s = %g is outside the range of %s [%g, %g] and no word of at most %d bits with %d fraction bits holds it",
			e.Name, e.Value, e.Format, -e.Format.MaxValue(), e.Format.MaxValue()-e.Format.Quantum(), MaxWord, e.Format.N)
	}
	return fmt.Sprintf("coefficient %s = %g is outside the range of %s [%g, %g]; it needs at least %d integer bits (q%d.%d)",
		e.Name, e.Value, e.Format, -e.Format.MaxValue(), e.Format.MaxValue()-e.Format.Quantum(), e.NeedM, e.NeedM, e.Format.N)
}

// Round rounds v to the format: to the nearest multiple of 2^-N with ties
// away from zero (fixed point, returning the raw word too), to the nearest
// float32 (ties to even, IEEE 754), or unchanged for float64.
func (f Format) Round(name string, v float64) (float64, int64, error) {
	switch f.Kind {
	case Float64:
		return v, 0, nil
	case Float32:
		if math.Abs(v) > math.MaxFloat32 {
			return 0, 0, &RangeError{Name: name, Value: v, NeedM: -1, Format: f}
		}
		return float64(float32(v)), 0, nil
	}
	raw := math.Round(math.Ldexp(v, f.N)) // math.Round: half away from zero
	if raw < float64(f.RawMin()) || raw >= -float64(f.RawMin()) {
		return 0, 0, &RangeError{Name: name, Value: v, NeedM: needM(raw, f.N), Format: f}
	}
	r := int64(raw)
	return math.Ldexp(float64(r), -f.N), r, nil
}

// needM is the smallest M with raw inside [−2^(M+N), 2^(M+N) − 1].
func needM(raw float64, n int) int {
	for m := 0; 1+m+n <= MaxWord; m++ {
		lim := math.Ldexp(1, m+n)
		if raw >= -lim && raw < lim {
			return m
		}
	}
	return -1
}
