package main

import (
	"fmt"
	"runtime"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/urfave/cli/v2"

	"plumb/internal/dataset"
)

// inputFlags are the flags that pick and prepare the input table; embed and
// sweep share them so a study and a single embedding read data the same way.
func inputFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "input", Aliases: []string{"i"}, Usage: "input table: .csv, .tsv, .parquet or .arrow with a header", Required: true},
		&cli.StringFlag{Name: "id-column", Usage: "column holding point ids (default: the 0-based row number)"},
		&cli.StringFlag{Name: "label-column", Usage: "column holding labels, kept with the layout and used by label-aware scores"},
		&cli.StringFlag{Name: "columns", Usage: "comma list of feature columns (default: every column except id and label)"},
		&cli.BoolFlag{Name: "standardize", Usage: "scale each feature to mean 0 and standard deviation 1 before anything else"},
		&cli.IntFlag{Name: "pca", Usage: "project the features onto their first `K` principal components (0: off)"},
		&cli.StringFlag{Name: "format", Usage: "input format when the extension does not tell: csv, tsv, parquet or arrow (a Parquet or Arrow file is recognised by its first bytes whatever its name)"},
		&cli.StringFlag{Name: "delimiter", Usage: "field separator of a CSV/TSV file: one character, or tab, space (runs of blanks, no quoting), comma, semicolon, pipe (default: comma for .csv, tab for .tsv, or a first line sep=X)"},
		&cli.BoolFlag{Name: "decimal-comma", Usage: "CSV/TSV numbers are written with a decimal comma (1,5); use with --delimiter ';'"},
		&cli.BoolFlag{Name: "no-header", Usage: "the CSV/TSV file has no header row: its first row is data and the columns are named col1, col2, …"},
	}
}

// inputOptions reads the flags from inputFlags.
func inputOptions(c *cli.Context) (string, dataset.Options, error) {
	opt := dataset.Options{
		IDColumn:     c.String("id-column"),
		LabelColumn:  c.String("label-column"),
		Standardize:  c.Bool("standardize"),
		PCA:          c.Int("pca"),
		Format:       c.String("format"),
		Delimiter:    c.String("delimiter"),
		DecimalComma: c.Bool("decimal-comma"),
		NoHeader:     c.Bool("no-header"),
	}
	// Every name given here ends up in study.json and Parquet metadata,
	// which hold UTF-8 only.
	for _, f := range []string{"input", "id-column", "label-column", "columns", "delimiter"} {
		if v := c.String(f); !utf8.ValidString(v) {
			return "", opt, fmt.Errorf("--%s %s: not valid UTF-8 (plumb stores names and paths as UTF-8)", f, strconv.Quote(v))
		}
	}
	if s := strings.TrimSpace(c.String("columns")); s != "" {
		for _, f := range strings.Split(s, ",") {
			f = strings.TrimSpace(f)
			if f == "" {
				return "", opt, fmt.Errorf("--columns %q: empty column name", s)
			}
			opt.Columns = append(opt.Columns, f)
		}
	}
	if opt.PCA < 0 {
		return "", opt, fmt.Errorf("--pca %d: must be 0 (off) or a positive number of components", opt.PCA)
	}
	return c.String("input"), opt, nil
}

// threadsFlag sets the worker threads of one embedding.
var threadsFlag = &cli.IntFlag{Name: "threads", Usage: "worker threads (0: all cores)", Value: 0}

// threads returns the thread count asked for, or every core.
func threads(c *cli.Context) (int, error) {
	t := c.Int("threads")
	if t < 0 || t > maxParallel {
		return 0, fmt.Errorf("--threads %d: must be 0 (all cores) or 1..%d", t, maxParallel)
	}
	if t == 0 {
		t = runtime.GOMAXPROCS(0)
	}
	return t, nil
}
