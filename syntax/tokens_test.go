package syntax

import (
	"strings"
	"testing"
)

// Tokens splits a file the way the parser reads it: every kind appears,
// comments in their place, and nothing overlaps.
func TestTokens(t *testing.T) {
	src := "sample 50 µs # rate\r\nuse \"p.loop\"\nblock c = 2(z - .5) / z^-1\nloop l {\n  require overshoot <= 10 %\n}\n# end"
	var got []string
	prev := Pos(0)
	for _, tk := range Tokens([]byte(src)) {
		if tk.From < prev {
			t.Fatalf("token %v overlaps the one before", tk)
		}
		prev = tk.To
		got = append(got, string(rune('0'+tk.Kind))+src[tk.From:tk.To])
	}
	want := "1sample 250 6µs 5# rate 1use 3\"p.loop\" 1block 1c 4= 22 4( 1z 4- 2.5 4) 4/ 1z 4^ 4- 21 " +
		"1loop 1l 4{ 1require 1overshoot 4<= 210 4% 4} 5# end"
	if s := strings.Join(got, " "); s != want {
		t.Errorf("tokens\n got %s\nwant %s", s, want)
	}
}
