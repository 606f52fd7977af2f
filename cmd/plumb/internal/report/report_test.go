package report

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"plumb/cmd/plumb/internal/recommend"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

func TestWriteReport(t *testing.T) {
	st := syntheticStudy()
	dir := filepath.Join(t.TempDir(), "report")
	out, err := Write(st, dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// The synthetic R_NX AUC rises with perplexity by 0.02 a step (more
	// than the 0.01 tolerance): the perplexity 30 settings are the most
	// faithful and the most stable (smallest noise); both form one
	// arrangement and tie within tolerance on disparity and Jaccard, and
	// at their one perplexity the auto one has the lower KL (1.0 vs 1.03,
	// 3% > the 1% tolerance), so the KL step decides.
	if out.Recommendation == nil || out.Recommendation.Chosen.ID != "s-30-auto" {
		t.Fatalf("chosen: got %+v want s-30-auto", out.Recommendation)
	}
	if out.Recommendation.DecidedBy != "kl" {
		t.Errorf("decided by: got %s want kl", out.Recommendation.DecidedBy)
	}
	wantFigs := []string{"layouts", "heatmap-disparity", "heatmap-jaccard", "heatmap-trustworthiness", "heatmap-kl", "stability", "seed-spread", "kl-traces"}
	for _, name := range wantFigs {
		for _, ext := range []string{".svg", ".png", ".pdf"} {
			path := filepath.Join(dir, "figures", name+ext)
			data, err := os.ReadFile(path)
			if err != nil {
				t.Errorf("figure %s%s: %v", name, ext, err)
				continue
			}
			if ext == ".pdf" {
				// A one-page PDF (ISO 32000: the file starts with the
				// header and ends with %%EOF) with its fonts embedded and
				// the fixed date, not the time of writing.
				if !bytes.HasPrefix(data, []byte("%PDF-1.")) || !bytes.Contains(data[len(data)-8:], []byte("%%EOF")) {
					t.Errorf("%s: not a PDF", path)
				}
				if !bytes.Contains(data, []byte("/FontFile2")) {
					t.Errorf("%s: no embedded TrueType font", path)
				}
				if !bytes.Contains(data, []byte("/CreationDate (D:20000101000000)")) {
					t.Errorf("%s: creation date is not the fixed one", path)
				}
				continue
			}
			if ext == ".png" {
				img, err := png.Decode(bytes.NewReader(data))
				if err != nil {
					t.Errorf("%s: not a PNG: %v", path, err)
				} else if img.Bounds().Dx() < 200 || img.Bounds().Dy() < 100 {
					t.Errorf("%s: got %v, want a figure-sized image", path, img.Bounds())
				}
			} else {
				checkXML(t, path, data)
			}
		}
	}
	entries, _ := os.ReadDir(filepath.Join(dir, "figures"))
	if len(entries) != 3*len(wantFigs) {
		t.Errorf("figures dir holds %d files, want %d (no temporaries)", len(entries), 3*len(wantFigs))
	}

	page, err := os.ReadFile(filepath.Join(dir, "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	var rows, svgs, scripts int
	var ext []string
	var walk func(n *html.Node, inTable bool)
	walk = func(n *html.Node, inTable bool) {
		if n.Type == html.ElementNode {
			switch n.Data {
			case "table":
				for _, a := range n.Attr {
					if a.Key == "id" && a.Val == "settings-table" {
						inTable = true
					}
				}
			case "tr":
				if inTable && n.Parent != nil && n.Parent.Data == "tbody" {
					rows++
				}
			case "svg":
				svgs++
			case "script":
				scripts++
			}
			for _, a := range n.Attr {
				if a.Key == "src" || a.Key == "href" {
					v := a.Val
					if !(strings.HasPrefix(v, "data:") || strings.HasPrefix(v, "#") || strings.HasPrefix(v, "figures/") || v == "methods.md") {
						ext = append(ext, v)
					}
				}
				if a.Key == "src" {
					ext = append(ext, "src="+a.Val)
				}
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c, inTable)
		}
	}
	walk(doc, false)
	if rows != len(st.Settings) {
		t.Errorf("settings table: got %d rows want %d", rows, len(st.Settings))
	}
	if svgs != len(wantFigs) {
		t.Errorf("inline SVG figures: got %d want %d", svgs, len(wantFigs))
	}
	// Three inline scripts: the maps' data (JSON), the table's script and
	// the maps' script; none with a src.
	if scripts != 3 {
		t.Errorf("scripts: got %d want 3 inline", scripts)
	}
	if len(ext) > 0 {
		t.Errorf("page refers to outside resources: %v", ext)
	}
	text := string(page)
	for _, want := range []string{
		"Recommended setting: perplexity 30, learning_rate auto",
		"Runner-up", "Distill", "noise can look clustered", "does not replace", "tsne: diverged at iteration 17",
	} {
		if !strings.Contains(strings.ToLower(text), strings.ToLower(want)) {
			t.Errorf("page lacks %q", want)
		}
	}
}

func checkXML(t *testing.T, path string, data []byte) {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Errorf("%s: not well-formed XML: %v", path, err)
			return
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
			if se.Name.Space != "http://www.w3.org/2000/svg" {
				t.Errorf("%s: root namespace %q", path, se.Name.Space)
			}
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q want svg", path, root)
	}
}

// The methods text carries the study's real numbers.
func TestMethodsNumbers(t *testing.T) {
	st := syntheticStudy()
	rec, err := recommend.Recommend(Candidates(st), Rule{})
	if err != nil {
		t.Fatal(err)
	}
	m := strings.Join(Methods(st, rec), "\n")
	chosen := st.Setting(rec.Chosen.ID)
	for _, want := range []string{
		"plumb test", "n = 120 points", "d = 5 features", "standardised", "0123456789ab",
		"perplexity ∈ {5, 15, 30}", "learning rate ∈ {auto, 200}", "(6 settings)", "3 seeds (1, 2, 3)",
		"19 runs, of which 18 finished and 1 failed", "early exaggeration 12", "iterations (in all) 500",
		"the exact O(n²) sum", "k = 10",
		"trustworthiness " + fmtScore(chosen.Trustworthiness.Median) + " (IQR " + fmtScore(chosen.Trustworthiness.IQR) + ")",
		// the rule's R_NX AUC and its references (recommend.Rule.Words)
		"median R_NX AUC " + fmtScore(chosen.RNXAUC.Median) + " (IQR " + fmtScore(chosen.RNXAUC.IQR) + ")",
		"Lee & Verleysen 2009", "medoid run " + chosen.MedoidRun,
		"perplexity 30, learning_rate auto",
		"max(n / (4 · exaggeration), 50)",
	} {
		if !strings.Contains(m, want) {
			t.Errorf("methods lack %q:\n%s", want, m)
		}
	}
}

func TestBuildRejectsBadConsensus(t *testing.T) {
	st := syntheticStudy()
	st.Settings[2].Consensus = st.Settings[2].Consensus[:10]
	if _, err := Write(st, t.TempDir(), Options{}); err == nil || !strings.Contains(err.Error(), st.Settings[2].ID) {
		t.Errorf("got %v, want an error naming setting %s", err, st.Settings[2].ID)
	}
}

// A setting whose runs could only be identical (nothing varied) gets a
// "not measured" note, and its arrangements and unstable share read "not
// measured" rather than perfect (DESIGN.md, validity before features).
func TestNotMeasuredNote(t *testing.T) {
	st := syntheticStudy()
	s := &st.Settings[0]
	s.Varied, s.Arrangements, s.UnstableShare = "", 0, math.NaN()
	out, err := Write(st, t.TempDir(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	page, _ := os.ReadFile(out.Index)
	if !strings.Contains(string(page), "Stability not measured</strong> for perplexity 5, learning_rate auto:") {
		t.Error("page lacks the note on settings where nothing varied")
	}
	if !strings.Contains(string(page), "<td data-v=\"NaN\">not measured</td>") {
		t.Error("settings table does not say not measured")
	}
	st = syntheticStudy()
	out, _ = Write(st, t.TempDir(), Options{})
	page, _ = os.ReadFile(out.Index)
	if strings.Contains(string(page), "Stability not measured") {
		t.Error("note shown although every setting varies across seeds")
	}
}

func TestLabelColoursByFrequency(t *testing.T) {
	order, col := labelColours([]string{"b", "a", "c", "c", "b", "c"})
	if strings.Join(order, ",") != "c,b,a" {
		t.Errorf("order: got %v want c,b,a (by count, ties by name)", order)
	}
	if col["c"] != (marker{col: categorical[0]}) || col["a"] != (marker{col: categorical[2]}) {
		t.Errorf("markers: got %v", col)
	}
	// Past the palette's 20 colours: the 19 largest labels keep theirs,
	// the rest share grey (TestLabelColoursBeyondPalette covers more).
	var many []string
	for i := 0; i < 25; i++ {
		for k := 0; k <= 25-i; k++ {
			many = append(many, fmt.Sprintf("l%02d", i))
		}
	}
	order, col = labelColours(many)
	if col[order[18]] != (marker{col: categorical[18]}) || col[order[19]] != (marker{col: otherColor}) || col[order[24]] != (marker{col: otherColor}) {
		t.Errorf("markers past the palette: got %v %v %v", col[order[18]], col[order[19]], col[order[24]])
	}
}
