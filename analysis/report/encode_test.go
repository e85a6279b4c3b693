package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"ringside/analysis"
)

// reflectJSON is what encoding/json writes for v in the stream's settings
// (no HTML escapes; indented at depth when indent is set), without the
// trailing newline.
func reflectJSON(t *testing.T, v any, indent bool, depth int) []byte {
	t.Helper()
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if indent {
		enc.SetIndent(indentOf(depth), "  ")
	}
	if err := enc.Encode(v); err != nil {
		t.Fatal(err)
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n"))
}

// Floats and strings that exercise every branch of the two encoders: the
// exponent cut-offs, negative zero, the smallest and largest doubles,
// quotes, control characters, HTML characters (not escaped), multi-byte
// text, U+2028/U+2029 and invalid UTF-8.
var (
	trickyFloats = []float64{0, math.Copysign(0, -1), 1, -1.5, 0.1, 1e-6, 9.99e-7, 1e-7, 1.234e-9, 1e20, 1e21, 1.5e21, -3e-300,
		math.SmallestNonzeroFloat64, math.MaxFloat64, 123456789.123, 0.97, 3.14159e-5, 100}
	trickyStrings = []string{"", "kp", `a "quoted" \ back`, "tab\tnew\nline\rcr\bbs\fff\x00\x01\x1f\x7f", "<b>&amp;</b>",
		"GM ∞, PM 47°, µs", "line\u2028sep\u2029para", "bad \xff\xfe utf8 \xe2\x82", "é\u00e9"}
)

// fill sets every field of v to a random value: pointers and slices nil
// or not, maps of several keys, tricky floats and strings.
func fill(rng *rand.Rand, v reflect.Value) {
	switch v.Kind() {
	case reflect.Pointer:
		if rng.Intn(3) == 0 {
			return
		}
		v.Set(reflect.New(v.Type().Elem()))
		fill(rng, v.Elem())
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			fill(rng, v.Field(i))
		}
	case reflect.Slice:
		switch rng.Intn(4) {
		case 0:
			return // nil
		case 1:
			v.Set(reflect.MakeSlice(v.Type(), 0, 0))
		default:
			n := 1 + rng.Intn(3)
			v.Set(reflect.MakeSlice(v.Type(), n, n))
			for i := 0; i < n; i++ {
				fill(rng, v.Index(i))
			}
		}
	case reflect.Array:
		for i := 0; i < v.Len(); i++ {
			fill(rng, v.Index(i))
		}
	case reflect.Map:
		if rng.Intn(4) == 0 {
			return
		}
		v.Set(reflect.MakeMap(v.Type()))
		for i := rng.Intn(4); i > 0; i-- {
			k := reflect.New(v.Type().Key()).Elem()
			fill(rng, k)
			e := reflect.New(v.Type().Elem()).Elem()
			fill(rng, e)
			v.SetMapIndex(k, e)
		}
	case reflect.String:
		v.SetString(trickyStrings[rng.Intn(len(trickyStrings))])
	case reflect.Float64:
		v.SetFloat(trickyFloats[rng.Intn(len(trickyFloats))])
	case reflect.Bool:
		v.SetBool(rng.Intn(2) == 0)
	case reflect.Int:
		v.SetInt(int64(rng.Intn(100000)))
	default:
		panic("fill: no case for " + v.Kind().String())
	}
}

// The hand-written encoder writes what encoding/json writes, byte for
// byte, for files with every field set, unset, nil or empty at random.
func TestAppendJSONMatchesReflection(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	for i := 0; i < 2000; i++ {
		var f File
		if i > 0 {
			fill(rng, reflect.ValueOf(&f).Elem())
		}
		got, err := f.AppendJSON(nil)
		if err != nil {
			t.Fatal(err)
		}
		if want := reflectJSON(t, f, false, 0); !bytes.Equal(got, want) {
			t.Fatalf("case %d:\n got %s\nwant %s", i, got, want)
		}
	}
}

// A NaN or infinite figure is an error, as it is for encoding/json.
func TestAppendJSONRefusesNaN(t *testing.T) {
	for _, v := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		f := File{Gains: []Gain{{Name: "k", Value: v}}}
		if _, err := f.AppendJSON(nil); err == nil {
			t.Errorf("%v encoded without an error", v)
		}
		if _, err := json.Marshal(f); err == nil {
			t.Errorf("%v: encoding/json encoded it; the two disagree", v)
		}
	}
}

// The stream writes, compact and indented, exactly the bytes the
// reflection encoder wrote for the demo files and for random files.
func TestStreamBytesAsReflection(t *testing.T) {
	dir, _ := filepath.Abs("../../testdata/demo")
	paths, _ := filepath.Glob(filepath.Join(dir, "*.loop"))
	var results []*analysis.Result
	for _, p := range paths {
		src, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		results = append(results, analysis.Check(context.Background(), p, src, analysis.Env{Roots: []string{dir}}))
	}
	random, _ := buildRandom(t, 5, 8)
	results = append(results, random...)
	display := filepath.Base
	for _, indent := range []bool{false, true} {
		var want bytes.Buffer
		want.WriteString(map[bool]string{false: `{"files":[`, true: "{\n  \"files\": [\n"}[indent])
		for i, r := range results {
			if i > 0 {
				want.WriteString(map[bool]string{false: ",", true: ",\n"}[indent])
			}
			if indent {
				want.WriteString(indentOf(2))
			}
			want.Write(reflectJSON(t, buildFile(r, display), indent, 2))
		}
		want.WriteString(map[bool]string{false: "]}\n", true: "\n  ]\n}\n"}[indent])
		var got bytes.Buffer
		s := NewStream("json", &got, display, "test", indent)
		for _, r := range results {
			s.Add(r)
		}
		if err := s.Close(); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want.Bytes()) {
			t.Errorf("indent %v: the stream's bytes differ from encoding/json's", indent)
		}
	}
}

// BenchmarkJSONStream measures the report of one 500-loop file.
func BenchmarkJSONStream(b *testing.B) {
	dir := b.TempDir()
	var src strings.Builder
	src.WriteString("sample 1 ms\nblock d = z^-1\n")
	for i := 0; i < 500; i++ {
		fmt.Fprintf(&src, "gain k%d = %g\nblock p%d = 0.01 / ((z - %g)(z - 0.5))\nloop l%d {\n  forward k%d p%d\n  feedback d\n}\n",
			i, 1+float64(i%9), i, 0.9+0.09*float64(i%7)/7, i, i, i)
	}
	r := analysis.Check(context.Background(), filepath.Join(dir, "f.loop"), []byte(src.String()), analysis.Env{Roots: []string{dir}, Options: analysis.Options{NoStepSamples: true}})
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		s := NewStream("json", discard{}, filepath.Base, "test", false)
		s.Add(r)
		if err := s.Close(); err != nil {
			b.Fatal(err)
		}
	}
}

type discard struct{}

func (discard) Write(p []byte) (int, error) { return len(p), nil }

// A long loops list, encoded in chunks side by side and written in
// pieces, is byte for byte what encoding/json writes.
func TestLongLoopListMatchesReflection(t *testing.T) {
	rng := rand.New(rand.NewSource(2))
	for _, n := range []int{2*loopChunk - 1, 2 * loopChunk, 5*loopChunk + 7} {
		f := File{Path: "long.loop", Loops: make([]Loop, n)}
		for i := range f.Loops {
			fill(rng, reflect.ValueOf(&f.Loops[i]).Elem())
		}
		want := reflectJSON(t, f, false, 0)
		got, err := f.AppendJSON(nil)
		if err != nil || !bytes.Equal(got, want) {
			t.Fatalf("%d loops: AppendJSON differs (%v)", n, err)
		}
		var out bytes.Buffer
		if _, err := f.writeJSON(&out, nil); err != nil || !bytes.Equal(out.Bytes(), want) {
			t.Fatalf("%d loops: writeJSON differs (%v)", n, err)
		}
	}
}
