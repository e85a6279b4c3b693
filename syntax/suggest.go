package syntax

// topKeywords are the statement keywords in the order messages list them.
var topKeywords = []string{"sample", "use", "gain", "block", "loop", "realize"}

// didYouMean returns "; did you mean W?" for the keyword W closest to a
// mistyped word (at most two edits away, and fewer edits than the word
// has letters, so a short unrelated name suggests nothing), or "".
func didYouMean(word string, keywords []string) string {
	best, bestD := "", 3
	for _, k := range keywords {
		if d := EditDistance(word, k); d < bestD && d < len(word) {
			best, bestD = k, d
		}
	}
	if best == "" {
		return ""
	}
	return "; did you mean " + best + "?"
}

// EditDistance is the Levenshtein distance between a and b, in bytes
// (keywords and names are ASCII).
func EditDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur := make([]int, len(b)+1)
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev = cur
	}
	return prev[len(b)]
}
