package columns

import (
	"strings"
	"testing"
)

func TestTextAlignsByCodePoints(t *testing.T) {
	got := Text([][]string{{"loop", "PM"}, {"belt", "53.6°"}, {"tilt_long", "∞"}})
	want := []string{
		"loop       PM",
		"belt       53.6°",
		"tilt_long  ∞",
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func TestMarkdownEscapesPipes(t *testing.T) {
	got := Markdown([][]string{{"a", "b"}, {"x|y", "1"}})
	want := "| a | b |\n| --- | --- |\n| x\\|y | 1 |\n"
	if got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}
