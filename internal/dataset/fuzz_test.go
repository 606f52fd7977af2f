package dataset

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fuzzOptions derives reader options from two fuzz bytes and the file's
// first line, so that id, label, column selection, standardisation and
// PCA are all exercised.
func fuzzOptions(data []byte, sep string, a, b uint8) Options {
	first, _, _ := bytes.Cut(data, []byte("\n"))
	names := strings.Split(strings.TrimSpace(strings.TrimPrefix(string(first), "\xef\xbb\xbf")), sep)
	pick := func(v uint8) string {
		i := int(v%8) - 1
		if i < 0 || i >= len(names) {
			return ""
		}
		return strings.Trim(strings.TrimSpace(names[i]), `"`)
	}
	opt := Options{IDColumn: pick(a), LabelColumn: pick(a >> 3), Standardize: b&1 != 0, PCA: int(b>>1) % 4}
	if b&0x80 != 0 {
		if c := pick(b >> 3); c != "" {
			opt.Columns = []string{c}
		}
	}
	return opt
}

// fuzzRead checks the reader's contract on arbitrary bytes: no panic, and
// either a one-line *InputError or a data set with consistent sizes,
// finite values and unique ids.
func fuzzRead(t *testing.T, data []byte, format string, opt Options) {
	ds, err := readDelimited(bytes.NewReader(data), "fuzz."+format, format, false, opt, int64(len(data)))
	if err == nil {
		err = ds.prepare(opt)
	}
	if err != nil {
		var ie *InputError
		if !errors.As(err, &ie) {
			t.Fatalf("got %T %v, want *InputError", err, err)
		}
		if msg := err.Error(); strings.ContainsAny(msg, "\n\r") || !strings.HasPrefix(msg, "fuzz."+format+": ") {
			t.Fatalf("message %q is not one line starting with the file name", msg)
		}
		return
	}
	checkConsistent(t, ds)
	if opt.PCA > 0 && ds.D != opt.PCA {
		t.Fatalf("PCA %d gave D=%d", opt.PCA, ds.D)
	}
}

func addSeeds(f *testing.F, patterns ...string) {
	for _, p := range patterns {
		files, err := filepath.Glob(filepath.Join(inputs, p))
		if err != nil {
			f.Fatal(err)
		}
		for _, name := range files {
			data, err := os.ReadFile(name)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(data, uint8(0x0a), uint8(0)) // id = column 1, label = column 2
			f.Add(data, uint8(0x0a), uint8(0x05))
			f.Add(data, uint8(0), uint8(0x83))
		}
	}
}

// FuzzReadCSV: go test -fuzz FuzzReadCSV ./internal/dataset/
// (seeded from testdata/inputs/*.csv; crashers are kept in
// testdata/fuzz/FuzzReadCSV and rerun by every go test).
func FuzzReadCSV(f *testing.F) {
	addSeeds(f, "*.csv")
	f.Fuzz(func(t *testing.T, data []byte, a, b uint8) {
		fuzzRead(t, data, "csv", fuzzOptions(data, ",", a, b))
	})
}

// FuzzReadTSV: as FuzzReadCSV for tab-separated input.
func FuzzReadTSV(f *testing.F) {
	addSeeds(f, "*.tsv", "*.csv")
	f.Fuzz(func(t *testing.T, data []byte, a, b uint8) {
		fuzzRead(t, data, "tsv", fuzzOptions(data, "\t", a, b))
	})
}

// FuzzReadColumnar feeds arbitrary bytes to the Parquet and Arrow readers
// (seeded from testdata/inputs/*.parquet, *.arrow, *.arrows).
func FuzzReadColumnar(f *testing.F) {
	for _, p := range []string{"*.parquet", "*.arrow", "*.arrows"} {
		files, _ := filepath.Glob(filepath.Join(inputs, p))
		for _, name := range files {
			data, err := os.ReadFile(name)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(data, strings.HasSuffix(name, ".parquet"))
		}
	}
	f.Add(decimalParquet(f), true)
	f.Fuzz(func(t *testing.T, data []byte, parquet bool) {
		format := "arrow"
		if parquet {
			format = "parquet"
		}
		ds, err := readColumnar(bytes.NewReader(data), int64(len(data)), "fuzz."+format, format, Options{})
		if err == nil {
			err = ds.prepare(Options{})
		}
		if err != nil {
			var ie *InputError
			if !errors.As(err, &ie) || strings.ContainsAny(err.Error(), "\n\r") {
				t.Fatalf("got %T %q, want a one-line *InputError", err, err)
			}
			return
		}
		checkConsistent(t, ds)
	})
}

// FuzzReadDialect: the text reader with the dialect options (delimiter,
// decimal comma, no header) and the sniffing of encodings, line ends and
// compression, seeded from testdata/inputs/dialect_* and the other text
// fixtures (made by make_dialects.py).
func FuzzReadDialect(f *testing.F) {
	for _, p := range []string{"dialect_*", "*.csv", "*.tsv", "*.txt"} {
		files, _ := filepath.Glob(filepath.Join(inputs, p))
		for _, name := range files {
			data, err := os.ReadFile(name)
			if err != nil {
				f.Fatal(err)
			}
			for _, flags := range []uint8{0, 1, 2 | 8, 3, 16, 16 | 32 | 1} {
				f.Add(data, flags)
			}
		}
	}
	f.Fuzz(func(t *testing.T, data []byte, flags uint8) {
		opt := Options{
			Delimiter:    []string{"", ";", "space", "tab", "|", ","}[int(flags&7)%6],
			DecimalComma: flags&8 != 0,
			NoHeader:     flags&16 != 0,
			Standardize:  flags&64 != 0,
		}
		format := "csv"
		if flags&32 != 0 {
			format = "txt"
		}
		fuzzRead(t, data, format, opt)
	})
}
