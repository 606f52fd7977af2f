package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"plumb/cmd/plumb/internal/studyview"
	"plumb/internal/words"
	"plumb/stability"
)

// paramWords gives the usual parameter names a reader-friendly form.
func paramWords(name string) string {
	switch name {
	case "perplexity":
		return "perplexity"
	case "learning_rate":
		return "learning rate"
	case "exaggeration":
		return "early exaggeration"
	case "exaggeration_iters":
		return "early-exaggeration iterations"
	case "iters":
		return "iterations (in all)"
	case "init":
		return "initialisation"
	case "gradient":
		return "gradient method as planned"
	case "theta":
		return "Barnes-Hut θ"
	}
	return strings.ReplaceAll(name, "_", " ")
}

// scoreRange returns the smallest and largest finite median of a score
// across settings.
func scoreRange(st *studyview.View, get func(*studyview.Setting) stability.MedianIQR) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for i := range st.Settings {
		if v := get(&st.Settings[i]).Median; finite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	return
}

func seedList(s []uint64) string {
	var p []string
	for _, x := range s {
		p = append(p, fmt.Sprint(x))
	}
	if len(p) > 12 {
		return strings.Join(p[:5], ", ") + ", …, " + p[len(p)-1]
	}
	return strings.Join(p, ", ")
}

func fmtMedianIQR(s stability.MedianIQR) string {
	if !finite(s.Median) {
		return "not available"
	}
	return fmt.Sprintf("%s (IQR %s)", fmtScore(s.Median), fmtScore(s.IQR))
}

// Methods returns the methods paragraph(s) for the study and the
// recommendation (rec may be nil), as plain text ready to paste: one
// string per paragraph.
func Methods(st *studyview.View, rec *Recommendation) []string {
	var varied, fixed []string
	for _, p := range st.Grid {
		if len(p.Values) > 1 {
			varied = append(varied, fmt.Sprintf("%s ∈ {%s}", paramWords(p.Name), strings.Join(p.Values, ", ")))
		} else if len(p.Values) == 1 {
			fixed = append(fixed, fmt.Sprintf("%s %s", paramWords(p.Name), p.Values[0]))
		}
	}
	done, failed := 0, 0
	for _, r := range st.Runs {
		switch r.Status {
		case "done":
			done++
		case "failed":
			failed++
		}
	}
	tool := st.Tool
	if tool == "" {
		tool = "plumb"
	}
	pre := st.Input.Preprocessing
	if pre == "" {
		pre = "none"
	}
	var b strings.Builder
	fmt.Fprintf(&b, "Two-dimensional maps were computed with t-SNE (van der Maaten & Hinton, 2008) using %s %s. ", tool, st.Version)
	fmt.Fprintf(&b, "The input (%s) has n = %s and d = %s (preprocessing: %s; input fingerprint %s). ",
		nonEmpty(st.Input.Path, "file not recorded"), words.Count(st.Input.N, "point"), words.Count(st.Input.D, "feature"), pre, shortHash(st.Input.Fingerprint))
	if len(varied) > 0 {
		fmt.Fprintf(&b, "We ran every combination of %s", strings.Join(varied, " × "))
	} else {
		b.WriteString("We ran a single setting")
	}
	fmt.Fprintf(&b, " (%s), each with %s (%s): %s, of which %d finished", words.Count(len(st.Settings), "setting"), words.Count(len(st.Seeds), "seed"), seedList(st.Seeds), words.Count(len(st.Runs), "run"), done)
	if failed > 0 {
		fmt.Fprintf(&b, " and %d failed", failed)
	}
	b.WriteString(". ")
	if len(fixed) > 0 {
		fmt.Fprintf(&b, "Fixed settings: %s. ", strings.Join(fixed, ", "))
	}
	for _, p := range st.Grid {
		if p.Name == "learning_rate" && contains(p.Values, "auto") {
			b.WriteString("A learning rate of auto means max(n / (4 · exaggeration), 50) with the factor 4 kept in the gradient (equivalently n / exaggeration without it; Belkina et al., 2019). ")
		}
	}
	fmt.Fprintf(&b, "The gradient was computed by %s. ", nonEmpty(st.Gradient, "the method recorded per run"))
	fmt.Fprintf(&b, "The runs of each setting were aligned by generalised Procrustes analysis (Gower, 1975); agreement between seeds was measured by the Procrustes disparity of each pair of runs (the scipy.spatial.procrustes convention, 0 = identical up to rotation, reflection, scale and shift) and by the Jaccard overlap of each point's k = %d nearest neighbours in the two maps; faithfulness to the input by trustworthiness (Venna & Kaski, 2001) with the same k", st.K)
	if st.Sampled > 0 && st.Sampled < st.Input.N {
		fmt.Fprintf(&b, ", on a fixed sample of %s", words.Count(st.Sampled, "point"))
	}
	b.WriteString(". ")
	dlo, dhi := scoreRange(st, func(s *studyview.Setting) stability.MedianIQR { return s.Disparity })
	jlo, jhi := scoreRange(st, func(s *studyview.Setting) stability.MedianIQR { return s.Jaccard })
	tlo, thi := scoreRange(st, func(s *studyview.Setting) stability.MedianIQR { return s.Trustworthiness })
	klo, khi := scoreRange(st, func(s *studyview.Setting) stability.MedianIQR { return s.KL })
	fmt.Fprintf(&b, "Across settings, the median seed-to-seed disparity ranged from %s to %s, the median kNN Jaccard from %s to %s, the median trustworthiness from %s to %s and the median final KL divergence from %s to %s.",
		fmtScore(dlo), fmtScore(dhi), fmtScore(jlo), fmtScore(jhi), fmtScore(tlo), fmtScore(thi), fmtScore(klo), fmtScore(khi))
	paras := []string{b.String()}

	paras = append(paras, readingsParagraph(st))
	if rec != nil {
		s := st.Setting(rec.Chosen.ID)
		var r strings.Builder
		fmt.Fprintf(&r, "The setting was chosen by a stated rule: %s ", rec.Rule.Words())
		fmt.Fprintf(&r, "By this rule we chose %s. %s", st.Label(s), settingSummary(s))
		if !rec.StabilityMeasured {
			fmt.Fprintf(&r, " Its stability was not measured (%s): the pick rests on faithfulness alone.", notMeasuredWhy(s))
		}
		if rec.RunnerUp != nil {
			ru := st.Setting(rec.RunnerUp.ID)
			fmt.Fprintf(&r, " The runner-up, %s, was separated at step %s (margin %s): %s.", st.Label(ru), StepWords(rec.DecidedBy), MarginWords(rec.DecidedBy, rec.Margin), rec.Why)
		}
		if len(rec.Indistinguishable) > 0 {
			var names []string
			for _, id := range rec.Indistinguishable {
				names = append(names, st.Label(st.Setting(id)))
			}
			sort.Strings(names)
			fmt.Fprintf(&r, " Within the tolerances or the run-to-run spread, %s could not be told apart from it.", strings.Join(names, "; "))
		}
		paras = append(paras, r.String())
	}
	return paras
}

// MethodsMarkdown is the content of methods.md.
func MethodsMarkdown(st *studyview.View, rec *Recommendation) string {
	var b strings.Builder
	b.WriteString("# Methods\n\n")
	for _, p := range Methods(st, rec) {
		b.WriteString(p)
		b.WriteString("\n\n")
	}
	b.WriteString("## References\n\n")
	for _, r := range Cited(b.String()) {
		b.WriteString("- " + r + "\n")
	}
	return b.String()
}

// reference is one entry of methods.md's reference list and the citation
// that calls it in the text ("(Gower, 1975)" is cited as "Gower, 1975").
type reference struct{ cite, entry string }

var references = []reference{
	{"van der Maaten & Hinton, 2008", "van der Maaten, L. & Hinton, G. Visualizing Data using t-SNE. Journal of Machine Learning Research 9, 2579–2605 (2008)."},
	{"van der Maaten, 2014", "van der Maaten, L. Accelerating t-SNE using Tree-Based Algorithms. Journal of Machine Learning Research 15, 3221–3245 (2014)."},
	{"Linderman et al., 2019", "Linderman, G. C., Rachh, M., Hoskins, J. G., Steinerberger, S. & Kluger, Y. Fast interpolation-based t-SNE for improved visualization of single-cell RNA-seq data. Nature Methods 16, 243–245 (2019)."},
	{"Belkina et al., 2019", "Belkina, A. C. et al. Automated optimized parameters for T-distributed stochastic neighbor embedding improve visualization and analysis of large datasets. Nature Communications 10, 5415 (2019)."},
	{"Gower, 1975", "Gower, J. C. Generalized Procrustes analysis. Psychometrika 40, 33–51 (1975)."},
	{"Venna & Kaski, 2001", "Venna, J. & Kaski, S. Neighborhood preservation in nonlinear projection methods: an experimental study. ICANN (2001)."},
	{"Lee & Verleysen", "Lee, J. A. & Verleysen, M. Quality assessment of dimensionality reduction: rank-based criteria. Neurocomputing 72, 1431–1443 (2009)."},
	{"Lee, Peluffo-Ordóñez & Verleysen", "Lee, J. A., Peluffo-Ordóñez, D. H. & Verleysen, M. Multi-scale similarities in stochastic neighbour embedding: reducing dimensionality while preserving both local and global structure. Neurocomputing 169, 246–261 (2015)."},
	{"Rousseeuw, 1987", "Rousseeuw, P. J. Silhouettes: a graphical aid to the interpretation and validation of cluster analysis. Journal of Computational and Applied Mathematics 20, 53–65 (1987)."},
	{"Ester et al., 1996", "Ester, M., Kriegel, H.-P., Sander, J. & Xu, X. A density-based algorithm for discovering clusters in large spatial databases with noise. KDD 1996, 226–231."},
	{"Hennig", "Hennig, C. Cluster-wise assessment of cluster stability. Computational Statistics & Data Analysis 52, 258–271 (2007)."},
	{"Monti et al., 2003", "Monti, S., Tamayo, P., Mesirov, J. & Golub, T. Consensus clustering: a resampling-based method for class discovery and visualization of gene expression microarray data. Machine Learning 52, 91–118 (2003)."},
	{"", "Wattenberg, M., Viégas, F. & Johnson, I. How to Use t-SNE Effectively. Distill (2016)."},
}

// Cited returns the reference entries for the citations in text, in the
// list's order; entries without a citation (the reading notes' source) are
// always listed.
func Cited(text string) []string {
	var out []string
	for _, r := range references {
		if r.cite == "" || strings.Contains(text, r.cite) {
			out = append(out, r.entry)
		}
	}
	return out
}

// Cautions are the reading notes shown on every report.
var Cautions = []string{
	"Cluster sizes in a t-SNE map mean little: t-SNE expands dense clusters and contracts sparse ones, so a big blob is not a big or diverse group.",
	"Distances between clusters mean little: gaps and the order of far-apart clusters can change from one perplexity or seed to the next.",
	"Perplexity changes the picture: small values break data into many small clumps, large values merge them; look at more than one value.",
	"Noise can look clustered: random data at low perplexity shows clumps, so a cluster needs support outside the map.",
	"One map is not evidence: compare seeds and settings (as this report does) and confirm structure with the input data.",
	"The recommendation applies a fixed rule to a handful of seeds. It supports, and does not replace, the analyst's judgement.",
}

func nonEmpty(s, alt string) string {
	if s == "" {
		return alt
	}
	return s
}

func shortHash(h string) string {
	if len(h) > 12 {
		return h[:12] + "…"
	}
	return nonEmpty(h, "not recorded")
}

func contains(v []string, s string) bool {
	for _, x := range v {
		if x == s {
			return true
		}
	}
	return false
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
