package dataset

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// plan says which file columns (0-based) hold the id, the label and the
// features.
type plan struct {
	id, label int   // -1 when absent
	features  []int // file column of each feature, in output order
	names     []string
}

// resolveColumns checks the column names of a table and picks the id, label
// and feature columns asked for in opt. headerRow is the row that names the
// columns (1 for CSV/TSV), or 0 when the names come from a schema.
func resolveColumns(file string, names []string, headerRow int, opt Options) (*plan, error) {
	if len(names) == 0 {
		return nil, &InputError{File: file, Row: headerRow, Msg: "the table has no columns"}
	}
	index := make(map[string]int, len(names))
	for j, name := range names {
		if name == "" {
			return nil, &InputError{File: file, Row: headerRow, Column: j + 1, Msg: "empty column name"}
		}
		if k, dup := index[name]; dup {
			return nil, &InputError{File: file, Row: headerRow, Column: j + 1, ColumnName: name,
				Msg: fmt.Sprintf("duplicate column name %s (also column %d)", strconv.Quote(name), k+1)}
		}
		index[name] = j
	}
	for _, name := range append([]string{opt.IDColumn, opt.LabelColumn}, opt.Columns...) {
		if !utf8.ValidString(name) {
			return nil, &InputError{File: file, Msg: fmt.Sprintf("the column name %s asked for is not valid UTF-8", quoteCell(name)), keep: true}
		}
	}
	p := &plan{id: -1, label: -1, names: names}
	find := func(role, name string) (int, error) {
		if j, ok := index[name]; ok {
			return j, nil
		}
		return -1, &InputError{File: file, Msg: unknownColumn(role, name, names)}
	}
	var err error
	if opt.IDColumn != "" {
		if p.id, err = find("id column", opt.IDColumn); err != nil {
			return nil, err
		}
	}
	if opt.LabelColumn != "" {
		if p.label, err = find("label column", opt.LabelColumn); err != nil {
			return nil, err
		}
	}
	if len(opt.Columns) > 0 {
		seen := make(map[string]bool, len(opt.Columns))
		for _, name := range opt.Columns {
			if seen[name] {
				return nil, &InputError{File: file, Msg: fmt.Sprintf("feature column %s is listed twice", strconv.Quote(name))}
			}
			seen[name] = true
			j, err := find("feature column", name)
			if err != nil {
				return nil, err
			}
			switch j {
			case p.id:
				return nil, &InputError{File: file, Column: j + 1, ColumnName: name, Msg: "the id column cannot also be a feature"}
			case p.label:
				return nil, &InputError{File: file, Column: j + 1, ColumnName: name, Msg: "the label column cannot also be a feature"}
			}
			p.features = append(p.features, j)
		}
	} else {
		for j := range names {
			if j != p.id && j != p.label {
				p.features = append(p.features, j)
			}
		}
	}
	if len(p.features) == 0 {
		return nil, &InputError{File: file, Msg: fmt.Sprintf("no feature columns left: the only column(s) %s are the id or label column", listNames(names))}
	}
	return p, nil
}

// unknownColumn words the error for a column name that is not in the file:
// it suggests the closest name when one is close, and otherwise lists the
// columns.
func unknownColumn(role, name string, names []string) string {
	msg := fmt.Sprintf("unknown %s %s", role, strconv.Quote(name))
	if best := closest(name, names); best != "" {
		return msg + fmt.Sprintf("; did you mean %s? (columns: %s)", strconv.Quote(best), listNames(names))
	}
	return msg + "; the columns are: " + listNames(names)
}

// listNames lists column names for a message, cut after 12.
func listNames(names []string) string {
	const max = 12
	var b strings.Builder
	for i, n := range names {
		if i == max {
			fmt.Fprintf(&b, ", … (%d in all)", len(names))
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(oneLine(n))
	}
	return b.String()
}

// closest returns the name in names nearest to name: an exact match up to
// case, or else the one with the smallest edit distance (optimal string
// alignment: insertions, deletions, substitutions and transpositions of
// adjacent letters, case ignored) if that distance is at most 1 for names
// of 3 to 5 letters and len/3 for longer ones. Names shorter than 3 letters
// only match up to case. It returns "" when none is close.
func closest(name string, names []string) string {
	for _, n := range names {
		if strings.EqualFold(n, name) {
			return n
		}
	}
	l := len([]rune(name))
	limit := 0
	switch {
	case l >= 6:
		limit = l / 3
	case l >= 3:
		limit = 1
	}
	if limit == 0 {
		return ""
	}
	best, bestD := "", limit+1
	for _, n := range names {
		if d := editDistance(strings.ToLower(name), strings.ToLower(n), limit); d < bestD {
			best, bestD = n, d
		}
	}
	return best
}

// editDistance returns the optimal-string-alignment distance between a and
// b (runes), or limit+1 when it exceeds limit.
func editDistance(a, b string, limit int) int {
	ra, rb := []rune(a), []rune(b)
	if d := len(ra) - len(rb); d > limit || -d > limit {
		return limit + 1
	}
	w := len(rb) + 1
	dp := make([]int, (len(ra)+1)*w)
	for j := 0; j < w; j++ {
		dp[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		dp[i*w] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			v := min(dp[(i-1)*w+j]+1, dp[i*w+j-1]+1, dp[(i-1)*w+j-1]+cost)
			if i > 1 && j > 1 && ra[i-1] == rb[j-2] && ra[i-2] == rb[j-1] {
				v = min(v, dp[(i-2)*w+j-2]+1)
			}
			dp[i*w+j] = v
		}
	}
	if d := dp[len(ra)*w+len(rb)]; d <= limit {
		return d
	}
	return limit + 1
}
