package words

import "testing"

// English agreement of number (common practice): singular for one,
// plural for zero and for more than one.
func TestCount(t *testing.T) {
	for _, tc := range []struct {
		n    int
		noun string
		want string
	}{{0, "run", "0 runs"}, {1, "run", "1 run"}, {2, "run", "2 runs"}, {1, "setting", "1 setting"},
		{12, "seed", "12 seeds"}, {-1, "point", "-1 point"}, {2, "index", "2 indices"}} {
		if got := Count(tc.n, tc.noun); got != tc.want {
			t.Errorf("Count(%d, %q) = %q, want %q", tc.n, tc.noun, got, tc.want)
		}
	}
}
