package tsne

import (
	"os"
	"strconv"
)

// longTests reports whether PLUMB_LONG=1 asks for the long tests and
// benchmark sizes.
func longTests() bool { return os.Getenv("PLUMB_LONG") == "1" }

func itoa(n int) string { return strconv.Itoa(n) }
