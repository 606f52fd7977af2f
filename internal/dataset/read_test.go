package dataset

import (
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

const inputs = "../../testdata/inputs"

func in(name string) string { return filepath.Join(inputs, name) }

var goodOpt = Options{IDColumn: "id", LabelColumn: "group"}

// TestReadBadInput checks that each kind of bad input gets one line naming
// the file, row and column. Expected positions are read off the fixtures
// in testdata/inputs by hand (CSV rows are 1-based line numbers, header =
// line 1).
func TestReadBadInput(t *testing.T) {
	cases := []struct {
		name string
		file string
		opt  Options
		want string // exact Error() after the file name and ": "
	}{
		{"missing file", "does_not_exist.csv", goodOpt, "no such file"},
		{"empty file", "empty.csv", goodOpt, "empty file (no header row)"},
		{"blank lines only", "blank.csv", goodOpt, "empty file (no header row)"},
		{"header only", "header_only.csv", goodOpt, "no data rows after the header"},
		{"short row", "ragged_short.csv", goodOpt, "row 4, column 5 (c): missing field: the row has 4 fields, the header 5"},
		{"long row", "ragged_long.csv", goodOpt, "row 3, column 6: extra field: the row has 6 fields, the header 5"},
		{"not a number", "not_a_number.csv", goodOpt, `row 3, column 4 (b): not a number: "abc"`},
		{"nan", "nan.csv", goodOpt, `row 3, column 5 (c): NaN is not allowed: "nan"`},
		{"nan tsv", "nan.tsv", goodOpt, `row 3, column 5 (c): NaN is not allowed: "NaN"`},
		{"inf", "inf.csv", goodOpt, `row 3, column 3 (a): infinite value is not allowed: "inf"`},
		{"-Infinity", "neg_inf.csv", goodOpt, `row 4, column 4 (b): infinite value is not allowed: "-Infinity"`},
		{"empty cell", "empty_cell.csv", goodOpt, `row 3, column 4 (b): empty cell (missing value)`},
		{"overflow", "overflow.csv", goodOpt, `row 3, column 4 (b): number out of range for float64: "1e400"`},
		{"duplicate column", "duplicate_column.csv", goodOpt, `row 1, column 5 (a): duplicate column name "a" (also column 3)`},
		{"duplicate id", "duplicate_id.csv", goodOpt, `row 5, column 1 (id): duplicate id "p1" (first on row 2)`},
		{"empty id", "empty_id.csv", goodOpt, `row 3, column 1 (id): empty id`},
		{"no features", "no_features.csv", goodOpt, `no feature columns left: the only column(s) id, group are the id or label column`},
		{"bad quote", "bad_quote.csv", goodOpt, `row 3: extraneous or missing " in quoted-field (character 6 of the line); a field holding quotes must be quoted and its quotes doubled`},
		// Line 2 holds a quoted label with a line break, so the bad cell
		// on data row 3 is on line 5.
		{"line numbers after a quoted line break", "multiline_label.csv", goodOpt, `row 5, column 4 (b): not a number: "oops"`},
		{"label column as a default feature", "good.csv", Options{IDColumn: "id"}, `row 2, column 2 (group): not a number: "x"`},
		{"misspelt label column", "good.csv", Options{IDColumn: "id", LabelColumn: "gruop"},
			`unknown label column "gruop"; did you mean "group"? (columns: id, group, a, b, c)`},
		{"label column in the wrong case", "good.csv", Options{IDColumn: "id", LabelColumn: "Group"},
			`unknown label column "Group"; did you mean "group"? (columns: id, group, a, b, c)`},
		{"unknown id column", "good.csv", Options{IDColumn: "name"},
			`unknown id column "name"; the columns are: id, group, a, b, c`},
		{"unknown feature column", "good.csv", Options{IDColumn: "id", LabelColumn: "group", Columns: []string{"a", "d"}},
			`unknown feature column "d"; the columns are: id, group, a, b, c`},
		{"misspelt feature column", "good.csv", Options{IDColumn: "id", LabelColumn: "group", Columns: []string{"a", "bb"}},
			`unknown feature column "bb"; the columns are: id, group, a, b, c`},
		{"feature listed twice", "good.csv", Options{Columns: []string{"a", "a"}}, `feature column "a" is listed twice`},
		{"id as a feature", "good.csv", Options{IDColumn: "id", Columns: []string{"id", "a"}}, `column 1 (id): the id column cannot also be a feature`},
		{"corrupt gzip", "corrupt.csv.gz", goodOpt, `not a valid gzip file: gzip: invalid header`},
		{"unknown extension", "good.dat", goodOpt, `cannot tell the format from the extension .dat; name the format (csv, tsv, parquet or arrow)`},
		{"PCA too large", "good.csv", Options{IDColumn: "id", LabelColumn: "group", PCA: 4}, `PCA with 4 components needs 1 ≤ K ≤ min(n, d) = min(4, 3)`},
		{"a directory", ".", Options{Format: "csv"}, "is a directory, not a file"},
		{"unknown format option", "good.csv", Options{Format: "xlsx"}, `unknown format "xlsx" (want csv, tsv, parquet or arrow)`},
		{"negative PCA", "good.csv", Options{PCA: -1}, `PCA components must be 0 (off) or positive, got -1`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := in(c.file)
			ds, err := Read(path, c.opt)
			if err == nil {
				t.Fatalf("got a %d×%d data set, want error %q", ds.N, ds.D, c.want)
			}
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("got %T %v, want *InputError", err, err)
			}
			if got, want := err.Error(), path+": "+c.want; got != want {
				t.Errorf("got  %s\nwant %s", got, want)
			}
			if strings.ContainsAny(err.Error(), "\n\r") {
				t.Errorf("message is not one line: %q", err.Error())
			}
		})
	}
}
