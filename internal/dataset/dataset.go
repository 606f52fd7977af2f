package dataset

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"plumb/internal/words"
)

// Dataset is a table of N points with D numeric features, read from a file.
type Dataset struct {
	// Source is the file the data came from.
	Source string
	N, D   int
	// X holds the features row-major: point i is X[i*D : (i+1)*D].
	X []float64
	// Columns names the D feature columns (after --columns selection; after
	// PCA they are pc1..pcK).
	Columns []string
	// IDs has one id per point: the id column's values, or the 0-based row
	// number as a decimal string when there is no id column.
	IDs []string
	// Labels has one label per point, or is nil when no label column was given.
	Labels []string
	// Fingerprint is a hex SHA-256 of N, D, the feature bits (after any
	// standardisation or PCA), the ids and the labels. See Fingerprint for
	// the exact byte layout.
	Fingerprint string

	// SourceHash is the hex SHA-256 of the raw bytes of the file as stored
	// on disk (before any decompression).
	SourceHash string
	// Format is the format the file was read as: "csv", "tsv", "parquet"
	// or "arrow".
	Format string
	// Warnings lists things that were accepted but deserve a look, one
	// line each, such as constant feature columns.
	Warnings []string
	// Standardized reports whether the features were z-scored (Options.Standardize).
	Standardized bool
	// VarianceRatio has, after PCA, the fraction of the total variance of
	// the (possibly standardised) features explained by each kept
	// component, s_k² / Σ_j s_j², where s are the singular values of the
	// centred data matrix. It is nil when PCA was not asked for.
	VarianceRatio []float64
}

// Options selects and prepares the columns of the input table.
type Options struct {
	// IDColumn names the column holding point ids (text or integer; every id
	// must be unique and non-empty after removing surrounding spaces). If
	// empty, ids are the 0-based row numbers.
	IDColumn string
	// LabelColumn names a column of any type whose values are kept, as
	// text without surrounding spaces, in Dataset.Labels (a null in
	// Parquet/Arrow becomes ""). If empty, there are no labels.
	LabelColumn string
	// Columns lists the feature columns, in the order wanted. If empty,
	// every column except the id and label columns is a feature.
	Columns []string
	// Standardize z-scores each feature column (see Standardize).
	Standardize bool
	// PCA, if positive, replaces the features by their first PCA principal
	// component scores (see PCA). If 0, no projection is made.
	PCA int
	// Format is "csv", "tsv", "parquet" or "arrow" ("feather" and "ipc"
	// are taken as "arrow"). If empty, the format follows the file's
	// extension: .csv, .tsv/.tab, .txt (tab-separated when the first line
	// has a tab, comma-separated otherwise), each optionally followed by
	// .gz; .parquet/.pq; .arrow/.feather/.ipc/.arrows. Whatever the name
	// or Format says, a file whose first bytes are those of Parquet or
	// Arrow IPC is read as such, a text file named as Parquet or Arrow is
	// read as a text table, and gzip data is decompressed; each such
	// switch adds a line to Dataset.Warnings.
	Format string
	// Delimiter separates the fields of a CSV/TSV file: one character, or
	// "tab", "space" (runs of spaces and tabs, no quoting), "comma",
	// "semicolon" or "pipe". If empty, it follows the format (comma for
	// CSV, tab for TSV), or a first line "sep=X".
	Delimiter string
	// DecimalComma reads feature cells of CSV/TSV files with a decimal
	// comma ("1,5" is 1.5); cells holding a point are then refused.
	DecimalComma bool
	// NoHeader reads the first row of a CSV/TSV file as data; the columns
	// are then named col1, col2, …
	NoHeader bool
}

// Read reads a table from path and returns its features, ids and labels,
// after standardisation and PCA when opt asks for them (standardisation
// first).
//
// Column names must be non-empty and unique (surrounding spaces are
// removed from CSV/TSV header names). CSV and TSV files need a header row
// naming the columns. Fields may be
// quoted as in RFC 4180 (encoding/csv); a leading UTF-8 byte order mark is
// dropped, CRLF line ends are accepted and blank lines are skipped. Feature
// cells must be finite decimal numbers (surrounding spaces are ignored);
// empty cells, NaN and ±Inf in any spelling ("nan", "inf", "Infinity"), and
// numbers beyond the float64 range are refused.
//
// Parquet and Arrow IPC (file or stream) feature columns must be integer
// or floating-point of any width, without nulls, NaN or ±Inf.
//
// Every problem with the data is returned as an *InputError. Its Row is,
// for CSV and TSV, the 1-based physical line number in the file (the
// header is line 1, blank lines and line breaks inside quoted fields
// count), and for Parquet and Arrow the 1-based data row. Column is the
// 1-based position of the column in the file.
//
// Constant feature columns are accepted and reported in Dataset.Warnings.
// Identical rows are accepted (t-SNE handles duplicate points). Feature
// values beyond 1e100 in magnitude are refused unless opt.Standardize is
// set, and so are data whose largest value is below 1e-100: squared
// distances must neither overflow nor underflow. Negative zeros are
// stored as +0.
//
// path must name a regular file (see checkRegular); text must be UTF-8 or
// UTF-16 with a byte order mark (see readDelimited for the dialects), and
// ids, labels and column names that are not valid UTF-8 are refused.
func Read(path string, opt Options) (*Dataset, error) {
	format, gz, err := detectFormat(path, opt.Format)
	if err != nil {
		return nil, err
	}
	if opt.PCA < 0 {
		return nil, &InputError{File: path, Msg: fmt.Sprintf("PCA components must be 0 (off) or positive, got %d", opt.PCA)}
	}
	if err := checkRegular(path); err != nil {
		return nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &InputError{File: path, Msg: openMessage(err), Err: err}
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil {
		return nil, &InputError{File: path, Msg: "cannot stat: " + err.Error(), Err: err}
	} else if err := regularFile(path, st); err != nil {
		return nil, err // replaced between the look and the open
	}
	head := make([]byte, 64)
	n, _ := f.ReadAt(head, 0)
	named := format
	format, gz, note, err := contentFormat(path, head[:n], format, gz, opt.Format != "")
	if err != nil {
		return nil, err
	}
	h := sha256.New()
	var ds *Dataset
	switch format {
	case "parquet", "arrow":
		if gz {
			return nil, &InputError{File: path, Msg: "compressed (.gz) Parquet or Arrow files are not supported; use the format's own compression"}
		}
		if opt.NoHeader || opt.Delimiter != "" || opt.DecimalComma {
			return nil, &InputError{File: path, Msg: fmt.Sprintf("is a %s file: no-header, delimiter and decimal-comma apply to CSV/TSV files only", kindName(format))}
		}
		ds, err = readColumnarFile(f, path, format, opt)
		if err == nil {
			// The Parquet reader closes f; hash the bytes from a fresh handle.
			err = hashFile(h, path)
		}
	default:
		ds, err = readText(f, h, path, format, gz, opt)
	}
	if err != nil {
		var ie *InputError
		if note != "" && errors.As(err, &ie) && format != named {
			ie.Msg += " (the file " + note + ")"
		}
		return nil, err
	}
	if note != "" {
		ds.Warnings = append([]string{oneLine(path) + " " + note}, ds.Warnings...)
	}
	ds.SourceHash = hex.EncodeToString(h.Sum(nil))
	ds.Format = format
	if err := ds.prepare(opt); err != nil {
		return nil, err
	}
	return ds, nil
}

// contentFormat checks the format named by the extension or the Format
// option against the file's first bytes, and returns the format to read
// it as, whether it is gzip-compressed, and a note for the warning when
// the two differ. Parquet and Arrow IPC magic numbers are decisive; a
// text file named as Parquet or Arrow is read as a text table (tab- or
// comma-separated by its first line); gzip data in a file named as text
// is decompressed; workbooks are refused.
func contentFormat(path string, head []byte, format string, gz, given bool) (string, bool, string, error) {
	if len(head) == 0 {
		return format, gz, "", nil // empty: each reader says so
	}
	kind := contentKind(head)
	lower := strings.ToLower(path)
	as := "named " + filepath.Ext(strings.TrimSuffix(lower, ".gz"))
	if gz {
		as += ".gz"
	}
	if given {
		as = "given as --format " + format
	}
	switch kind {
	case kindParquet, kindArrow:
		if format != kind || gz {
			return kind, false, fmt.Sprintf("is %s file but is %s; read as %s", article(kindName(kind)), as, kindName(kind)), nil
		}
	case kindZip, kindOLE:
		return "", false, "", &InputError{File: path, Msg: workbook(kind)}
	case kindText, kindGzip:
		if format == "parquet" || format == "arrow" {
			if kind == kindGzip {
				if gz {
					return format, gz, "", nil // refused by Read as compressed Parquet/Arrow
				}
				return "", false, "", &InputError{File: path, Msg: fmt.Sprintf("is gzip-compressed data but is %s: decompress it, or name it .csv.gz or .tsv.gz if it is a compressed text table", as)}
			}
			if gz {
				return format, gz, "", nil
			}
			return "txt", false, fmt.Sprintf("is a text file but is %s; read as a text table (CSV, or TSV if its first line has a tab)", as), nil
		}
	}
	return format, gz, "", nil
}

func openMessage(err error) string {
	switch {
	case errors.Is(err, os.ErrNotExist):
		return "no such file"
	case errors.Is(err, os.ErrPermission):
		return "permission denied"
	}
	var pe *os.PathError
	if errors.As(err, &pe) {
		return "cannot open: " + pe.Err.Error()
	}
	return "cannot open: " + err.Error()
}

// readText reads a CSV or TSV file, gzip-compressed when gz is set (or
// when its first bytes say so), hashing the raw bytes into h.
func readText(f *os.File, h hash.Hash, path, format string, gz bool, opt Options) (*Dataset, error) {
	var size int64
	if st, err := f.Stat(); err == nil && !gz {
		size = st.Size()
	}
	ds, err := readDelimited(io.TeeReader(f, h), path, format, gz, opt, size)
	if err != nil {
		return nil, err
	}
	// Hash whatever the parser did not need to read (e.g. gzip trailer).
	if _, err := io.Copy(io.Discard, io.TeeReader(f, h)); err != nil {
		return nil, &InputError{File: path, Msg: "read error: " + err.Error(), Err: err}
	}
	return ds, nil
}

// detectFormat returns the canonical format name for path, and whether the
// file is gzip-compressed.
func detectFormat(path, format string) (string, bool, error) {
	lower := strings.ToLower(path)
	gz := strings.HasSuffix(lower, ".gz")
	if gz {
		lower = strings.TrimSuffix(lower, ".gz")
	}
	if format != "" {
		switch f := strings.ToLower(format); f {
		case "csv", "tsv", "parquet":
			return f, gz, nil
		case "arrow", "feather", "ipc":
			return "arrow", gz, nil
		default:
			return "", false, &InputError{File: path, Msg: fmt.Sprintf("unknown format %q (want csv, tsv, parquet or arrow)", format)}
		}
	}
	switch ext := filepath.Ext(lower); ext {
	case ".csv":
		return "csv", gz, nil
	case ".tsv", ".tab":
		return "tsv", gz, nil
	case ".txt":
		return "txt", gz, nil
	case ".parquet", ".pq":
		return "parquet", gz, nil
	case ".arrow", ".feather", ".ipc", ".arrows":
		return "arrow", gz, nil
	default:
		if ext == "" {
			ext = "(none)"
		}
		return "", false, &InputError{File: path, Msg: fmt.Sprintf("cannot tell the format from the extension %s; name the format (csv, tsv, parquet or arrow)", ext)}
	}
}

// CheckPerplexity returns an error when the data set has too few points for
// the perplexity: the perplexity calibration uses k = ⌊3·perplexity⌋
// neighbours per point, so t-SNE needs
//
//	n − 1 ≥ 3·perplexity,
//
// that is, perplexity ≤ (n − 1)/3: every point needs ⌊3·perplexity⌋ other
// points as neighbours (van der Maaten 2014 uses k = ⌊3u⌋ neighbours for
// perplexity u). Perplexity must also be finite and at least 1: it is the
// exponential of the entropy of a conditional distribution P(·|i), which is
// ≥ 0 (van der Maaten & Hinton 2008, section 2). The message names n and
// the largest perplexity allowed, rounded down to 2 decimals.
func (d *Dataset) CheckPerplexity(perplexity float64) error {
	if !(perplexity > 0) || perplexity > 1e300 {
		return &InputError{File: d.Source, Msg: fmt.Sprintf("perplexity must be a positive number, got %g", perplexity)}
	}
	if perplexity < 1 {
		return &InputError{File: d.Source, Msg: fmt.Sprintf("perplexity must be at least 1 (it is the exponential of an entropy), got %g", perplexity)}
	}
	if d.N < 2 {
		return &InputError{File: d.Source, Msg: fmt.Sprintf("%s %s too few for t-SNE: at least 2 are needed, and n − 1 ≥ 3·perplexity", words.Count(d.N, "point"), map[bool]string{true: "is", false: "are"}[d.N == 1])}
	}
	if float64(d.N-1) < 3*perplexity {
		return &InputError{File: d.Source, Msg: fmt.Sprintf("%d points are too few for perplexity %g: t-SNE needs n − 1 ≥ 3·perplexity, so the largest perplexity allowed is %g",
			d.N, perplexity, math.Floor(float64(d.N-1)/3*100)/100)}
	}
	return nil
}

// hashFile writes the bytes of the file at path into h.
func hashFile(h hash.Hash, path string) error {
	f, err := os.Open(path)
	if err != nil {
		return &InputError{File: path, Msg: openMessage(err), Err: err}
	}
	defer f.Close()
	if _, err := io.Copy(h, f); err != nil {
		return &InputError{File: path, Msg: "read error: " + err.Error(), Err: err}
	}
	return nil
}
