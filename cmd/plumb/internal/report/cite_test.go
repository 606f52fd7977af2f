package report

import (
	"plumb/cmd/plumb/internal/recommend"
	"regexp"
	"strings"
	"testing"
)

// citation is an author-year citation in running text: "(Gower, 1975)",
// "(Venna & Kaski, 2001)", "(Belkina et al., 2019)", or one inside a longer
// parenthesis ("… the factor 4 …; Belkina et al., 2019)").
var citation = regexp.MustCompile(`(?:\(|; )([^();]+?), ((?:19|20)\d\d)\)`)

// CheckCitations returns the citations of a methods.md text that have no
// entry in its reference list: an entry must start with the first author's
// surname and hold the year.
func CheckCitations(md string) (cites int, missing []string) {
	body, refs, ok := strings.Cut(md, "## References")
	if !ok {
		return 0, []string{"no reference list"}
	}
	var entries []string
	for _, l := range strings.Split(refs, "\n") {
		if e, ok := strings.CutPrefix(strings.TrimSpace(l), "- "); ok {
			entries = append(entries, e)
		}
	}
	for _, m := range citation.FindAllStringSubmatch(body, -1) {
		cites++
		first := strings.TrimSpace(m[1])
		if i := strings.Index(first, " & "); i >= 0 {
			first = first[:i]
		}
		first = strings.TrimSuffix(first, " et al.")
		found := false
		for _, e := range entries {
			if strings.HasPrefix(e, first+",") && strings.Contains(e, m[2]) {
				found = true
			}
		}
		if !found {
			missing = append(missing, m[0])
		}
	}
	return cites, missing
}

// Every work methods.md cites by author and year is in its reference list,
// for each gradient method the text can name.
func TestMethodsCitationsListed(t *testing.T) {
	for _, grad := range []string{"the exact O(n²) sum", "Barnes-Hut (van der Maaten, 2014) with θ = 0.8",
		"FFT-accelerated interpolation (Linderman et al., 2019)",
		"Barnes-Hut (van der Maaten, 2014) with θ = 0.8 and FFT-accelerated interpolation (Linderman et al., 2019)"} {
		st := syntheticStudy()
		st.Gradient = grad
		rec, _ := recommend.Recommend(Candidates(st), Rule{})
		md := MethodsMarkdown(st, rec)
		cites, missing := CheckCitations(md)
		if cites < 3 {
			t.Errorf("%s: found %d citations; the text cites t-SNE, Procrustes and trustworthiness at least", grad, cites)
		}
		if len(missing) > 0 {
			t.Errorf("%s: cited but not in the references: %q\n%s", grad, missing, md)
		}
	}
	// The checker itself finds a missing entry.
	if _, missing := CheckCitations("A method (Nobody et al., 1999) and (van der Maaten, 2014).\n\n## References\n\n- van der Maaten, L. Accelerating t-SNE. (2014).\n"); len(missing) != 1 || !strings.Contains(missing[0], "Nobody") {
		t.Errorf("checker: missing %q, want the one Nobody citation", missing)
	}
}
