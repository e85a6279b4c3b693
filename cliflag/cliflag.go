// Package cliflag declares the command line flags of ringside's commands:
// the usage text names the value each flag takes (`--root DIR`), and a
// value that does not fit says what is expected (`--gain-margin takes a
// number of dB, such as 6`). Numbers must be finite and in range: NaN,
// Inf and out-of-range values are refused, never passed on.
package cliflag

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"ringside/analysis/columns"
)

// ErrHelp is returned by Parse when -h or --help was given; the usage has
// then been written to the help writer.
var ErrHelp = flag.ErrHelp

// Set is one command's flags.
type Set struct {
	fs    *flag.FlagSet
	cmd   string // e.g. "ringside check"
	args  string // positional arguments in the usage line, e.g. "PATH..."
	about string // one line on what the command does
	bad   error  // the first value error, in our words
}

// New returns an empty set for command cmd taking the positional
// arguments args.
func New(cmd, args, about string) *Set {
	fs := flag.NewFlagSet(cmd, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	return &Set{fs: fs, cmd: cmd, args: args, about: about}
}

// Name is the command, e.g. "ringside check", for messages.
func (s *Set) Name() string { return s.cmd }

// value is a flag.Value that records its own error message.
type value struct {
	set   *Set
	name  string
	parse func(string) error
	show  func() string
}

func (v *value) String() string {
	if v.show == nil {
		return ""
	}
	return v.show()
}

func (v *value) Set(s string) error {
	if err := v.parse(s); err != nil {
		if v.set.bad == nil {
			v.set.bad = fmt.Errorf("--%s %v (got %q)", v.name, err, s)
		}
		return err
	}
	return nil
}

// Number declares a float flag. unit names what the number is ("a number
// of dB"), example a valid value; values outside [lo, hi] are refused.
// usage must quote the value's name in backquotes (`DB`).
func (s *Set) Number(p *float64, name string, def float64, what, example string, lo, hi float64, usage string) {
	*p = def
	s.fs.Var(&value{set: s, name: name, show: func() string { return strconv.FormatFloat(*p, 'g', -1, 64) }, parse: func(text string) error {
		v, err := strconv.ParseFloat(strings.TrimSpace(text), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("takes %s, such as %s", what, example)
		}
		if v < lo || v > hi {
			return fmt.Errorf("must be between %g and %g (%s)", lo, hi, what)
		}
		*p = v
		return nil
	}}, name, usage)
}

// Choice declares a flag taking one of a few words.
func (s *Set) Choice(p *string, name, def string, choices []string, usage string) {
	*p = def
	s.fs.Var(&value{set: s, name: name, show: func() string { return *p }, parse: func(text string) error {
		for _, c := range choices {
			if text == c {
				*p = text
				return nil
			}
		}
		return fmt.Errorf("takes one of %s", strings.Join(choices, ", "))
	}}, name, usage)
}

// Duration declares a positive duration flag (0 means none).
func (s *Set) Duration(p *time.Duration, name string, usage string) {
	s.fs.Var(&value{set: s, name: name, show: func() string {
		if *p == 0 {
			return ""
		}
		return p.String()
	}, parse: func(text string) error {
		d, err := time.ParseDuration(text)
		if err != nil || d <= 0 {
			return errors.New("takes a positive duration, such as 30s or 2m")
		}
		*p = d
		return nil
	}}, name, usage)
}

// String declares a text flag (a path or a name); it may not be empty.
func (s *Set) String(p *string, name string, usage string) {
	s.fs.Var(&value{set: s, name: name, show: func() string { return *p }, parse: func(text string) error {
		if text == "" {
			return errors.New("takes a non-empty value")
		}
		*p = text
		return nil
	}}, name, usage)
}

// Bool declares a switch.
func (s *Set) Bool(p *bool, name string, usage string) {
	s.fs.BoolVar(p, name, false, usage)
}

// Parse reads flags before, between and after the positional arguments
// and returns the positional ones. On -h/--help it writes the usage to
// help and returns ErrHelp; any other error is a message in our words,
// ready to print after the command's name.
func (s *Set) Parse(args []string, help io.Writer) ([]string, error) {
	var pos []string
	for {
		if err := s.fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				s.Usage(help)
				return nil, ErrHelp
			}
			if s.bad != nil {
				return nil, s.bad
			}
			return nil, s.plain(err)
		}
		args = s.fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

// plain rewords the flag package's own errors with double dashes.
func (s *Set) plain(err error) error {
	msg := err.Error()
	for _, pre := range []string{"flag provided but not defined: -", "flag needs an argument: -"} {
		if name, ok := strings.CutPrefix(msg, pre); ok {
			if strings.HasPrefix(pre, "flag provided") {
				return fmt.Errorf("unknown flag --%s (see %s --help)", name, s.cmd)
			}
			f := s.fs.Lookup(name)
			val, _ := flag.UnquoteUsage(f)
			return fmt.Errorf("--%s needs a value: --%s %s", name, name, val)
		}
	}
	return err
}

// Usage writes the usage line and one line per flag: `--name VALUE`,
// what it does, and its default when it has one.
func (s *Set) Usage(w io.Writer) {
	fmt.Fprintf(w, "usage: %s [flags] %s\n\n%s\n\nflags:\n", s.cmd, s.args, s.about)
	rows := [][]string{}
	s.fs.VisitAll(func(f *flag.Flag) {
		val, usage := flag.UnquoteUsage(f)
		if _, isBool := f.Value.(interface{ IsBoolFlag() bool }); isBool {
			val = ""
		}
		name := "  --" + f.Name
		if len(f.Name) == 1 {
			name = "  -" + f.Name
		}
		if val != "" {
			name += " " + val
		}
		if def := f.Value.String(); def != "" && def != "false" {
			usage += " (default " + def + ")"
		}
		rows = append(rows, []string{name, usage})
	})
	for _, line := range columns.Text(rows) {
		fmt.Fprintln(w, line)
	}
}
