package report

import (
	"fmt"
	"strings"

	"plumb/cmd/plumb/internal/recommend"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// StepWords names a step of the recommendation rule (recommend.Step…) for
// people.
func StepWords(step string) string {
	switch step {
	case recommend.StepFaithfulness:
		return "(1) faithfulness: median R_NX AUC"
	case recommend.StepMeasured:
		return "(2) stability measured"
	case recommend.StepArrangements:
		return "(3) distinct arrangements"
	case recommend.StepDisparity:
		return "(4) median disparity"
	case recommend.StepJaccard:
		return "(5) median kNN Jaccard"
	case recommend.StepKL:
		return "(6) median KL at one perplexity"
	case recommend.StepAUC:
		return "(7) highest median R_NX AUC"
	case recommend.StepOrder:
		return "(7) id order (exact tie)"
	}
	return step
}

// MarginWords states the runner-up's margin on the step that separated it.
func MarginWords(step string, m float64) string {
	switch step {
	case recommend.StepMeasured, recommend.StepOrder:
		return "none (not a numeric step)"
	case recommend.StepArrangements:
		return fmt.Sprintf("%g more arrangement(s)", m)
	case recommend.StepKL:
		return fmt.Sprintf("%.1f%% higher KL", 100*m)
	}
	return fmt.Sprintf("%.4f", m)
}

// notMeasuredWhy says why a setting's between-run readings were not
// measured.
func notMeasuredWhy(s *studyview.Setting) string {
	switch {
	case s.Varied == "" && strings.HasPrefix(s.NotMeasured, "its finished runs gave bit-identical"):
		return "its runs gave bit-identical maps"
	case s.Varied == "":
		return "nothing varied between its runs"
	case s.RunsDone < 2:
		return fmt.Sprintf("%d finished run", s.RunsDone)
	}
	return "agreement scores missing"
}

// fmtShare is a share in percent, or "not measured".
func fmtShare(x float64) string {
	if !finite(x) {
		return "not measured"
	}
	return fmt.Sprintf("%.1f%%", 100*x)
}

// arrangementWords describes a setting's distinct arrangements.
func arrangementWords(s *studyview.Setting) string {
	if s.Arrangements == 0 {
		return "distinct arrangements not measured"
	}
	if s.Arrangements == 1 {
		return fmt.Sprintf("its %d runs form one arrangement", s.RunsDone)
	}
	return fmt.Sprintf("its runs fall into %d distinct arrangements (%s runs; bimodal)", s.Arrangements, s.ArrangementSizes)
}

// settingSummary is one sentence of a setting's headline readings.
func settingSummary(s *studyview.Setting) string {
	var b strings.Builder
	fmt.Fprintf(&b, "Over %d finished runs: median R_NX AUC %s, trustworthiness %s, disparity %s, kNN Jaccard %s, final KL %s; %s; ",
		s.RunsDone, fmtMedianIQR(s.RNXAUC), fmtMedianIQR(s.Trustworthiness), fmtMedianIQR(s.Disparity), fmtMedianIQR(s.Jaccard), fmtMedianIQR(s.KL), arrangementWords(s))
	fmt.Fprintf(&b, "points flagged unstable by co-assignment: %s. ", fmtShare(s.UnstableShare))
	if s.MedoidRun != "" {
		fmt.Fprintf(&b, "Its picture is the medoid run %s (the run closest in total disparity to the others), not an average of maps", s.MedoidRun)
		if s.ConsensusShown {
			b.WriteString("; the runs agree closely enough (one arrangement, every pairwise disparity ≤ 0.02) for the averaged consensus to be shown beside it.")
		} else {
			fmt.Fprintf(&b, "; the averaged consensus is not shown as a picture (%s).", nonEmpty(s.ConsensusNote, "not checked"))
		}
	}
	return b.String()
}

// ClustersCaption explains the per-cluster table of setting s.
func ClustersCaption(s *studyview.Setting) string {
	words := fmt.Sprintf("Density clusters (DBSCAN, Ester et al. 1996, radius read from the map) of the medoid run %s. Each is matched to its most similar cluster in every other run of the setting by the Jaccard similarity of their points; the mean is read on Hennig's (2007) scale (≤ 0.5 dissolved, 0.5–0.6 doubtful, 0.6–0.75 a pattern whose membership is doubtful, 0.75–0.85 stable, ≥ 0.85 highly stable; cut-offs quoted from memory). Runs dissolved counts the runs whose best match was ≤ 0.5: a cluster can read stable on average and still dissolve in some runs.", s.MedoidRun)
	if s.Varied == "" || s.RunsDone < 2 {
		words += " Here nothing varied between the runs (or there is one run), so the stability is not measured."
	} else if warn := stability.SeedWarning(s.RunsDone); warn != "" {
		words += " Seeds rule: " + warn + "."
	}
	return words
}

// readingsParagraph is the methods text for the between-run readings.
func readingsParagraph(st *studyview.View) string {
	var b strings.Builder
	b.WriteString("Each run's faithfulness over every neighbourhood size was summarised by the area under the rank-based quality curve R_NX(K) on a logarithmic K axis (Lee & Verleysen 2009; Lee, Peluffo-Ordóñez & Verleysen 2015)")
	b.WriteString(". Between-run readings were computed only where something varied between a setting's runs (random starts); where nothing varied (PCA starts on the whole data) they are reported as not measured. ")
	b.WriteString("The runs of a setting were grouped into distinct arrangements by single-linkage clustering of their pairwise Procrustes distances, kept only when the split leaves a clean gap and its mean silhouette width (Rousseeuw, 1987) is at least 0.5. ")
	b.WriteString("The map shown for a setting is its medoid run (the run with the least total Procrustes disparity to the others); an averaged consensus is shown beside it only when the runs form one arrangement and every pairwise disparity is at most 0.02. ")
	b.WriteString("Each run's map was clustered by DBSCAN (Ester et al., 1996; at least 30 neighbours within 1.5 times the median 30th-neighbour distance), and each cluster of the medoid run was matched to its most similar cluster in every other run by Jaccard similarity and read on Hennig's (2007) scale. ")
	b.WriteString("Each point's stability is its co-assignment score: the mean over pairs of runs of the Jaccard similarity of the groups holding it (the consensus idea in pairwise form; Monti et al., 2003); points below 0.75 are flagged unstable. The earlier per-point spread (distance from the consensus) is kept as a reading of global placement only.")
	if st.HasLabels() {
		b.WriteString(" For each label we report the share of its points not flagged and the labels its points are grouped with across runs.")
	}
	seeds := len(st.Seeds)
	if warn := stability.SeedWarning(seeds); warn != "" {
		fmt.Fprintf(&b, " With %d seeds per setting these readings are thin: %s.", seeds, warn)
	}
	var nm []string
	for i := range st.Settings {
		if s := &st.Settings[i]; s.RunsDone > 0 && s.Varied == "" {
			nm = append(nm, st.Label(s))
		}
	}
	if len(nm) > 0 {
		fmt.Fprintf(&b, " Not measured (nothing varied between the runs): %s.", strings.Join(nm, "; "))
	}
	return b.String()
}

// unmeasured lists the settings with finished runs whose between-run
// readings were not measured because nothing varied between the runs (or
// the runs came out identical).
func unmeasured(st *studyview.View) []string {
	var out []string
	for i := range st.Settings {
		s := &st.Settings[i]
		if s.RunsDone >= 1 && s.Varied == "" {
			out = append(out, st.Label(s))
		}
	}
	return out
}

// picture returns the layout shown for setting s and says what it is: the
// medoid run (a map some run produced, DESIGN.md) when it was read and
// places every point, otherwise the consensus of the runs (a subsample
// medoid leaves points out; old studies have no medoid).
func picture(s *studyview.Setting) (layout []float64, what string) {
	if len(s.Medoid) > 0 && len(s.Medoid) == len(s.Consensus) {
		ok := true
		for _, v := range s.Medoid {
			if !finite(v) {
				ok = false
				break
			}
		}
		if ok {
			return s.Medoid, "the medoid run " + s.MedoidRun
		}
	}
	return s.Consensus, "the consensus layout"
}
