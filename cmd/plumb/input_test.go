package main

// The input cases of issues 19 and 21 through the real command line:
// non-regular files, plan files, encodings, magnitudes, negative zero,
// headerless files and dialects. Each is a row of the README's bad-input
// table. Dialect fixtures: testdata/inputs/make_dialects.py.

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// inWithin runs plumb and fails the test if it has not returned within
// d: a command that blocks (on a FIFO, say) is itself the bug.
func inWithin(t *testing.T, d time.Duration, args ...string) (string, string, int) {
	t.Helper()
	type res struct {
		out, err string
		code     int
	}
	done := make(chan res, 1)
	go func() {
		o, e, c := plumb(t, args...)
		done <- res{o, e, c}
	}()
	select {
	case r := <-done:
		return r.out, r.err, r.code
	case <-time.After(d):
		t.Fatalf("plumb %s did not return within %v", strings.Join(args, " "), d)
	}
	return "", "", 0
}

// inScaled writes iris.csv with every feature multiplied by scale (as
// text, %g of the product).
func inScaled(t *testing.T, dir, name string, scale float64) string {
	return rbVariant(t, dir, name, func(l []string) []string {
		for i := 1; i < len(l); i++ {
			f := strings.Split(l[i], ",")
			for j := 2; j < len(f); j++ {
				v, err := strconv.ParseFloat(f[j], 64)
				if err != nil {
					t.Fatal(err)
				}
				f[j] = strconv.FormatFloat(v*scale, 'g', -1, 64)
			}
			l[i] = strings.Join(f, ",")
		}
		return l
	})
}

// TestInputNotRegular: a device, a FIFO and a plan file that is either
// get one error line at once (no hang, no memory growth), and a study
// whose input was replaced by a FIFO cannot make `plumb score` block.
func TestInputNotRegular(t *testing.T) {
	tmp := t.TempDir()
	fifo := filepath.Join(tmp, "cells.csv")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	const notRegular = "is not a regular file"
	cases := []struct {
		name string
		args []string
		want []string
	}{
		{"input /dev/zero", rbSweep("/dev/zero", filepath.Join(tmp, "s1"), "--format", "csv"), []string{"/dev/zero: " + notRegular + " (a character device)"}},
		{"embed /dev/zero", rbEmbed("/dev/zero", filepath.Join(tmp, "l1.parquet"), "--format", "csv"), []string{"/dev/zero: " + notRegular}},
		{"input FIFO", rbSweep(fifo, filepath.Join(tmp, "s2")), []string{fifo + ": " + notRegular + " (a FIFO)"}},
		{"plan /dev/zero", rbSweep(rbIris, filepath.Join(tmp, "s3"), "--plan", "/dev/zero"), []string{"plan file: /dev/zero: " + notRegular}},
		{"plan FIFO", rbSweep(rbIris, filepath.Join(tmp, "s4"), "--plan", fifo), []string{"plan file: " + fifo + ": " + notRegular}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, stderr, code := inWithin(t, 30*time.Second, c.args...)
			rbOneError(t, code, stderr, 0, c.want...)
		})
	}
	for _, d := range []string{"s1", "s2", "s3", "s4", "l1.parquet"} {
		rbNothingIn(t, filepath.Join(tmp, d))
	}

	// A study made from a regular file whose input is then replaced by a
	// FIFO: score refuses the FIFO instead of waiting for a writer.
	in := rbVariant(t, tmp, "data.csv", func(l []string) []string { return l })
	out := filepath.Join(tmp, "study")
	if _, stderr, code := plumb(t, rbSweep(in, out, "--no-score")...); code != 0 {
		t.Fatalf("sweep: exit %d: %s", code, stderr)
	}
	os.Remove(in)
	if err := syscall.Mkfifo(in, 0o600); err != nil {
		t.Fatal(err)
	}
	_, stderr, code := inWithin(t, 30*time.Second, "score", out)
	rbOneError(t, code, stderr, 0, in+": "+notRegular+" (a FIFO)")
}

// TestInputPlanTooLarge: a plan file over MaxPlanBytes (1 MiB) is refused
// without being read whole.
func TestInputPlanTooLarge(t *testing.T) {
	tmp := t.TempDir()
	plan := filepath.Join(tmp, "plan.json")
	os.WriteFile(plan, []byte(`{"perplexity": "5"`+strings.Repeat(" ", 2<<20)+"}"), 0o644)
	out := filepath.Join(tmp, "study")
	_, stderr, code := plumb(t, rbSweep(rbIris, out, "--plan", plan)...)
	rbOneError(t, code, stderr, 0, "plan file: "+plan+": larger than 1 MiB: too large for this kind of file")
	rbNothingIn(t, out)
}

// TestInputEncodings: text that is not UTF-8 is refused with its row and
// column (our rule: refuse, never replace bytes), in the file and on the
// command line, so that study.json and the Parquet tables hold UTF-8 only.
func TestInputEncodings(t *testing.T) {
	tmp := t.TempDir()
	latin1ID := rbVariant(t, tmp, "latin1.csv", func(l []string) []string { return rbSetCell(l, 3, 0, "caf\xe9") })
	latin1Label := rbVariant(t, tmp, "latin1label.csv", func(l []string) []string { return rbSetCell(l, 9, 1, "s\xe9tosa") })
	latin1Name := rbVariant(t, tmp, "latin1name.csv", func(l []string) []string { return rbSetCell(l, 0, 5, "p\xe9tal") })
	const convert = "is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)"
	cases := []struct {
		name  string
		input string
		extra []string
		want  string
	}{
		{"Latin-1 id", latin1ID, nil, latin1ID + `: row 4, column 1 (id): id "caf\xe9" ` + convert},
		{"Latin-1 label", latin1Label, nil, latin1Label + `: row 10, column 2 (species): label "s\xe9tosa" ` + convert},
		{"Latin-1 column name", latin1Name, []string{"--columns", "sepal_length,sepal_width"}, latin1Name + `: row 1, column 6: column name "p\xe9tal" ` + convert},
		{"column flag not UTF-8", rbIris, []string{"--columns", "sepal\xe9"}, `--columns "sepal\xe9": not valid UTF-8 (plumb stores names and paths as UTF-8)`},
		{"input path not UTF-8", filepath.Join(tmp, "caf\xe9.csv"), nil, `--input "` + filepath.Join(tmp, "caf") + `\xe9.csv": not valid UTF-8 (plumb stores names and paths as UTF-8)`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "study")
			_, stderr, code := plumb(t, append(rbSweep(c.input, out), c.extra...)...)
			rbOneError(t, code, stderr, 0, "plumb: error: "+c.want)
			rbNothingIn(t, out)
		})
	}
}

// TestInputMagnitude: values beyond 1e100 are refused before any file is
// written (our limit: squared distances must stay finite with room for
// sums, see dataset.maxMagnitude); with --standardize the same data run,
// because z-scores do not depend on the unit.
func TestInputMagnitude(t *testing.T) {
	tmp := t.TempDir()
	oneCell := rbVariant(t, tmp, "cell.csv", func(l []string) []string { return rbSetCell(l, 6, 4, "1e200") })
	scaled := inScaled(t, tmp, "scaled.csv", 1e160)
	tiny := inScaled(t, tmp, "tiny.csv", 1e-200)
	cases := []struct {
		name, input, want string
	}{
		{"one cell 1e200", oneCell, `cell.csv: row 7, column 5 (petal_length): value "1e200" is too large: plumb takes feature values up to 1e100 in magnitude, so that squared distances stay finite; rescale the column (or pass --standardize)`},
		{"every value ×1e160", scaled, `scaled.csv: row 2, column 3 (sepal_length): value "5.0999999999999995e+160" is too large`},
		{"every value ×1e-200", tiny, `tiny.csv: every feature value is smaller than 1e-100 in magnitude (the largest is 7.9e-200): squared distances would underflow to zero; rescale the data (or pass --standardize)`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "study")
			_, stderr, code := plumb(t, rbSweep(c.input, out)...)
			rbOneError(t, code, stderr, 0, c.want)
			rbNothingIn(t, out)
			lay := filepath.Join(t.TempDir(), "layout.parquet")
			_, stderr, code = plumb(t, rbEmbed(c.input, lay)...)
			rbOneError(t, code, stderr, 0, c.want)
			rbNothingIn(t, lay)
			_, stderr, code = plumb(t, rbSweep(c.input, out, "--standardize")...)
			if code != 0 {
				t.Errorf("with --standardize: exit %d: %s", code, stderr)
			}
		})
	}
}

// TestInputNegativeZero: a study made from a file with 0 resumes from
// the same file with -0 in that cell, and `plumb check` compares the two
// (the fingerprints are equal: -0 is read as +0).
func TestInputNegativeZero(t *testing.T) {
	tmp := t.TempDir()
	zero := rbVariant(t, tmp, "zero.csv", func(l []string) []string { return rbSetCell(l, 8, 3, "0") })
	negZero := rbVariant(t, tmp, "negzero.csv", func(l []string) []string { return rbSetCell(l, 8, 3, "-0") })
	a, b := filepath.Join(tmp, "a"), filepath.Join(tmp, "b")
	if _, stderr, code := plumb(t, rbSweep(zero, a)...); code != 0 {
		t.Fatalf("sweep: exit %d: %s", code, stderr)
	}
	if _, stderr, code := plumb(t, rbSweep(negZero, a, "--quiet=false")...); code != 0 || !strings.Contains(stderr, "1 already finished") {
		t.Errorf("resume from the -0 file: exit %d, want 0 and the run already finished:\n%s", code, stderr)
	}
	if _, stderr, code := plumb(t, rbSweep(negZero, b)...); code != 0 {
		t.Fatalf("sweep: exit %d: %s", code, stderr)
	}
	if _, stderr, code := plumb(t, "check", "--baseline", a, b); code == 2 {
		t.Errorf("check of the 0 and -0 studies: exit 2 (cannot compare): %s", stderr)
	}
}

// TestInputHeaderless: a file without header row is warned about (its
// first row became the header), and --no-header reads all 150 rows.
func TestInputHeaderless(t *testing.T) {
	tmp := t.TempDir()
	noHeader := rbVariant(t, tmp, "nohdr.csv", func(l []string) []string {
		for i := range l {
			l[i] = strings.Join(strings.Split(l[i], ",")[2:], ",")
		}
		return l[1:]
	})
	lay := filepath.Join(tmp, "a.csv")
	base := []string{"embed", "--input", noHeader, "--out", lay, "--perplexity", "5", "--init", "random", "--iters", "30", "--exaggeration-iters", "10"}
	_, stderr, code := plumb(t, base...)
	want := "plumb: warning: " + noHeader + `: the header row looks like data ("5.1", "3.5", "1.4", "0.2" are numbers): if the file has no header row, pass --no-header, or its first row is lost`
	if code != 0 || !strings.Contains(stderr, want+"\n") || !strings.Contains(stderr, "149 points") {
		t.Errorf("headerless file: exit %d, stderr:\n%s\nwant the line %s and 149 points", code, stderr, want)
	}
	os.Remove(lay)
	os.Remove(lay + ".json")
	_, stderr, code = plumb(t, append(base, "--no-header")...)
	if code != 0 || strings.Contains(stderr, "warning") || !strings.Contains(stderr, "150 points × 4 features") {
		t.Errorf("--no-header: exit %d, stderr:\n%s\nwant 150 points and no warning", code, stderr)
	}
}

// TestInputDialects: the dialects of issue 21 through the command line:
// an error naming the dialect and its flags, and with them a study that
// stores how it read the file, so that `plumb score` reads it again.
func TestInputDialects(t *testing.T) {
	tmp := t.TempDir()
	semi := rbVariant(t, tmp, "semi.csv", func(l []string) []string {
		for i := range l {
			l[i] = strings.ReplaceAll(l[i], ",", ";")
			if i > 0 {
				l[i] = strings.ReplaceAll(l[i], ".", ",")
			}
		}
		return l
	})
	out := filepath.Join(tmp, "study")
	_, stderr, code := plumb(t, rbSweep(semi, out)...)
	rbOneError(t, code, stderr, 0, "plumb: error: "+semi+": this looks like a semicolon-separated file with decimal commas: pass --delimiter ';' --decimal-comma")
	rbNothingIn(t, out)
	if _, stderr, code = plumb(t, rbSweep(semi, out, "--delimiter", ";", "--decimal-comma", "--no-score")...); code != 0 {
		t.Fatalf("with the flags: exit %d: %s", code, stderr)
	}
	info, err := os.ReadFile(filepath.Join(out, "study.json"))
	if err != nil || !strings.Contains(string(info), `"delimiter": ";"`) || !strings.Contains(string(info), `"decimal_comma": true`) {
		t.Errorf("study.json does not record the dialect (%v):\n%s", err, info)
	}
	if _, stderr, code = plumb(t, "score", out); code != 0 {
		t.Errorf("score of the semicolon study: exit %d: %s", code, stderr)
	}
	// The same study from the plain file has the same fingerprint: the
	// sweep resumes into it.
	if _, stderr, code = plumb(t, rbSweep(rbIris, out, "--quiet=false", "--no-score")...); code != 0 || !strings.Contains(stderr, "1 already finished") {
		t.Errorf("plain iris into the semicolon study: exit %d:\n%s", code, stderr)
	}

	// A Parquet file named .csv is read as Parquet, with a warning.
	pq, err := os.ReadFile(rbInputs + "good.parquet")
	if err != nil {
		t.Fatal(err)
	}
	misnamed := filepath.Join(tmp, "good.csv")
	os.WriteFile(misnamed, pq, 0o644)
	lay := filepath.Join(tmp, "l.parquet")
	_, stderr, code = plumb(t, "embed", "--input", misnamed, "--id-column", "id", "--label-column", "group", "--out", lay,
		"--perplexity", "1", "--init", "random", "--iters", "30", "--exaggeration-iters", "10")
	if want := "plumb: warning: " + misnamed + " is a Parquet file but is named .csv; read as Parquet\n"; code != 0 || !strings.Contains(stderr, want) {
		t.Errorf("Parquet named .csv: exit %d, stderr:\n%s\nwant %s", code, stderr, want)
	}
}
