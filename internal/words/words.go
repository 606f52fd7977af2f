// Package words spells counts in English for messages people read:
// "1 run", "2 runs", "0 runs". Every user-facing count in plumb goes
// through Count, so no message says "1 runs" or "run(s)".
package words

import "strconv"

// irregular holds the plurals that are not the noun plus "s".
var irregular = map[string]string{"index": "indices", "axis": "axes"}

// Noun returns noun in the form that agrees with n: the singular for
// n = 1 and n = −1, the plural otherwise (English counts 0 as plural).
func Noun(n int, noun string) string {
	if n == 1 || n == -1 {
		return noun
	}
	if p, ok := irregular[noun]; ok {
		return p
	}
	return noun + "s"
}

// Count returns n and noun in agreement, e.g. Count(1, "run") = "1 run",
// Count(3, "setting") = "3 settings".
func Count(n int, noun string) string {
	return strconv.Itoa(n) + " " + Noun(n, noun)
}
