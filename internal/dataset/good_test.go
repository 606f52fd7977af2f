package dataset

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// goodTable is the table in testdata/inputs/good.* (every format holds the
// same values), written out by hand.
var goodTable = struct {
	ids, labels, cols []string
	x                 []float64
}{
	ids:    []string{"p1", "p2", "p3", "p4"},
	labels: []string{"x", "y", "x", "y"},
	cols:   []string{"a", "b", "c"},
	x: []float64{
		1.5, 2, -0.25,
		3, 4, 0.5,
		-1e-3, 0, 2,
		7.25, 10, 1,
	},
}

func checkGood(t *testing.T, ds *Dataset) {
	t.Helper()
	if ds.N != 4 || ds.D != 3 {
		t.Fatalf("got %d×%d, want 4×3", ds.N, ds.D)
	}
	if !reflect.DeepEqual(ds.IDs, goodTable.ids) || !reflect.DeepEqual(ds.Labels, goodTable.labels) || !reflect.DeepEqual(ds.Columns, goodTable.cols) {
		t.Errorf("got ids %q labels %q columns %q, want %q %q %q", ds.IDs, ds.Labels, ds.Columns, goodTable.ids, goodTable.labels, goodTable.cols)
	}
	if !reflect.DeepEqual(ds.X, goodTable.x) {
		t.Errorf("got X %v, want %v", ds.X, goodTable.x)
	}
}

// TestReadGoodText checks that the same table written as plain CSV, TSV,
// CSV with a byte order mark, CRLF line ends, quoted fields, padded cells
// and trailing blank lines, and gzip-compressed CSV read to the same data
// set with the same fingerprint.
func TestReadGoodText(t *testing.T) {
	var want string
	for _, name := range []string{"good.csv", "good.tsv", "good_bom_crlf.csv", "good.csv.gz"} {
		t.Run(name, func(t *testing.T) {
			ds, err := Read(in(name), goodOpt)
			if err != nil {
				t.Fatal(err)
			}
			checkGood(t, ds)
			if want == "" {
				want = ds.Fingerprint
			} else if ds.Fingerprint != want {
				t.Errorf("fingerprint %s, want %s (as good.csv)", ds.Fingerprint, want)
			}
			if len(ds.SourceHash) != 64 || len(ds.Warnings) != 0 {
				t.Errorf("source hash %q warnings %q", ds.SourceHash, ds.Warnings)
			}
		})
	}
}

func TestReadFormatOption(t *testing.T) {
	// .tsv content read with an explicit format; .txt sniffs tabs.
	ds, err := Read(in("good.tsv"), Options{IDColumn: "id", LabelColumn: "group", Format: "tsv"})
	if err != nil {
		t.Fatal(err)
	}
	checkGood(t, ds)
	if _, err := Read(in("good.tsv"), Options{IDColumn: "id", LabelColumn: "group", Format: "csv"}); err == nil {
		t.Error("a TSV file read as CSV: got no error, want one (the header is one column)")
	}
}

func TestColumnsAndDefaults(t *testing.T) {
	ds, err := Read(in("good.csv"), Options{LabelColumn: "group", Columns: []string{"c", "a"}, IDColumn: "id"})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"c", "a"}; !reflect.DeepEqual(ds.Columns, want) {
		t.Errorf("columns %q, want %q", ds.Columns, want)
	}
	if want := []float64{-0.25, 1.5, 0.5, 3, 2, -1e-3, 1, 7.25}; !reflect.DeepEqual(ds.X, want) {
		t.Errorf("X %v, want %v", ds.X, want)
	}
	// No id column: ids are the 0-based row numbers; no label: Labels nil.
	ds, err = Read(in("identical_rows.csv"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"0", "1", "2", "3"}; !reflect.DeepEqual(ds.IDs, want) || ds.Labels != nil {
		t.Errorf("ids %q labels %q, want %q and nil", ds.IDs, ds.Labels, want)
	}
}

// TestConstantColumn: a constant column is accepted with a warning, and
// standardisation leaves it at 0 instead of dividing by zero (decision
// documented on Read and Standardize).
func TestConstantColumn(t *testing.T) {
	ds, err := Read(in("constant_column.csv"), Options{IDColumn: "id", LabelColumn: "group", Standardize: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(ds.Warnings) != 1 || !strings.Contains(ds.Warnings[0], `column "b" is constant (every value is 2)`) {
		t.Errorf("warnings %q, want one naming column b", ds.Warnings)
	}
	for i := 0; i < ds.N; i++ {
		if v := ds.X[i*ds.D+1]; v != 0 {
			t.Errorf("standardised constant column row %d = %g, want 0", i, v)
		}
		for _, v := range ds.X[i*ds.D : (i+1)*ds.D] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("non-finite value %g after standardising", v)
			}
		}
	}
}

// TestIdenticalRows: all rows identical are read (the engine handles
// duplicates); CheckPerplexity applies n − 1 ≥ 3·perplexity (the bound
// stated in issue 2, following the k = ⌊3·perplexity⌋ neighbours of van der
// Maaten 2014).
func TestIdenticalRows(t *testing.T) {
	ds, err := Read(in("identical_rows.csv"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if ds.N != 4 || ds.D != 2 || len(ds.Warnings) != 2 {
		t.Fatalf("got %d×%d with warnings %q, want 4×2 and two constant-column warnings", ds.N, ds.D, ds.Warnings)
	}
	if err := ds.CheckPerplexity(1); err != nil { // 3 ≥ 3
		t.Errorf("perplexity 1 with n=4: %v", err)
	}
	err = ds.CheckPerplexity(1.5)
	want := in("identical_rows.csv") + ": 4 points are too few for perplexity 1.5: t-SNE needs n − 1 ≥ 3·perplexity, so the largest perplexity allowed is 1"
	if err == nil || err.Error() != want {
		t.Errorf("got %v, want %s", err, want)
	}
	if err := ds.CheckPerplexity(0); err == nil {
		t.Error("perplexity 0: got no error")
	}
	if err := ds.CheckPerplexity(math.NaN()); err == nil {
		t.Error("perplexity NaN: got no error")
	}
}

// TestOpenDatasets: the published shapes of the two open data sets (UCI
// Machine Learning Repository: iris 150 instances × 4 attributes, 3
// classes of 50; optical digits as shipped by scikit-learn, 1797 × 64).
func TestOpenDatasets(t *testing.T) {
	cases := []struct {
		file, label  string
		n, d, labels int
	}{
		{"../../testdata/iris.csv", "species", 150, 4, 3},
		{"../../testdata/digits.csv", "digit", 1797, 64, 10},
	}
	for _, c := range cases {
		ds, err := Read(c.file, Options{IDColumn: "id", LabelColumn: c.label})
		if err != nil {
			t.Fatal(err)
		}
		distinct := map[string]bool{}
		for _, l := range ds.Labels {
			distinct[l] = true
		}
		if ds.N != c.n || ds.D != c.d || len(ds.IDs) != c.n || len(ds.Labels) != c.n || len(distinct) != c.labels || len(ds.X) != c.n*c.d {
			t.Errorf("%s: got %d×%d, %d ids, %d labels (%d distinct); want %d×%d and %d classes",
				c.file, ds.N, ds.D, len(ds.IDs), len(ds.Labels), len(distinct), c.n, c.d, c.labels)
		}
	}
}

func TestFingerprintSensitivity(t *testing.T) {
	base, err := Read(in("good.csv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	noLabel, err := Read(in("good.csv"), Options{IDColumn: "id", Columns: []string{"a", "b", "c"}})
	if err != nil {
		t.Fatal(err)
	}
	if base.Fingerprint == noLabel.Fingerprint {
		t.Error("fingerprint ignores the labels")
	}
	mod := *base
	mod.X = append([]float64(nil), base.X...)
	mod.X[5] = math.Nextafter(mod.X[5], 10)
	if Fingerprint(&mod) == base.Fingerprint {
		t.Error("fingerprint ignores a one-ulp change")
	}
	mod = *base
	mod.IDs = []string{"p1", "p2", "p3", "p5"}
	if Fingerprint(&mod) == base.Fingerprint {
		t.Error("fingerprint ignores the ids")
	}
}

// TestReadTxt: .txt files are tab-separated when the first line has a tab.
func TestReadTxt(t *testing.T) {
	ds, err := Read(in("good.txt"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	checkGood(t, ds)
}

// TestSingleFeature: one feature column is a valid input (issue 7's
// table), with or without standardisation and PCA to one component.
func TestSingleFeature(t *testing.T) {
	ds, err := Read(in("good.csv"), Options{IDColumn: "id", Columns: []string{"a"}, Standardize: true, PCA: 1})
	if err != nil {
		t.Fatal(err)
	}
	if ds.D != 1 || ds.N != 4 || len(ds.VarianceRatio) != 1 || math.Abs(ds.VarianceRatio[0]-1) > 1e-15 {
		t.Errorf("got %d×%d with ratios %v, want 4×1 and [1]", ds.N, ds.D, ds.VarianceRatio)
	}
	checkConsistent(t, ds)
}

// TestTSVBareQuote: TSV has no quoting convention of its own (IANA
// text/tab-separated-values), so a bare quote inside a field is kept
// rather than refused as it is in CSV (RFC 4180).
func TestTSVBareQuote(t *testing.T) {
	ds, err := Read(in("bare_quote.tsv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{`5" screw`, "x"}; !reflect.DeepEqual(ds.Labels, want) {
		t.Errorf("labels %q, want %q", ds.Labels, want)
	}
}
