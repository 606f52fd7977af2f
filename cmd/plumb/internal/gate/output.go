package gate

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"strconv"
	"strings"
	"text/tabwriter"
)

// num marshals NaN and ±Inf as JSON null.
type num float64

// MarshalJSON writes the number, or null when it is not finite.
func (n num) MarshalJSON() ([]byte, error) {
	if !finite(float64(n)) {
		return []byte("null"), nil
	}
	return []byte(strconv.FormatFloat(float64(n), 'g', -1, 64)), nil
}

type jsonTest struct {
	Tested         bool   `json:"tested"`
	Reason         string `json:"reason,omitempty"`
	WithinBaseline num    `json:"within_baseline"`
	WithinCurrent  num    `json:"within_current"`
	Across         num    `json:"across"`
	Shift          num    `json:"shift"`
	MinShift       num    `json:"min_shift"`
	P              num    `json:"p"`
	PMin           num    `json:"p_min"`
	Level          num    `json:"level"`
	Relabelings    int    `json:"relabelings"`
	Exact          bool   `json:"exact"`
	Failed         bool   `json:"failed"`
}

func toJSONTest(t Test) jsonTest {
	return jsonTest{t.Tested, t.Reason, num(t.WithinBaseline), num(t.WithinCurrent), num(t.Across), num(t.Shift), num(t.Margin),
		num(t.P), num(t.PMin), num(t.Level), t.Relabelings, t.Exact, t.Failed}
}

type jsonChange struct {
	Baseline num  `json:"baseline"`
	Current  num  `json:"current"`
	Change   num  `json:"change"`
	Failed   bool `json:"failed"`
}

type jsonSetting struct {
	Label         string   `json:"label"`
	BaselineID    string   `json:"baseline_id"`
	CurrentID     string   `json:"current_id"`
	Status        string   `json:"status"`
	RunsBaseline  int      `json:"runs_baseline"`
	RunsCurrent   int      `json:"runs_current"`
	Points        int      `json:"points"`
	MissingPoints int      `json:"missing_points"`
	Reproduction  any      `json:"reproduction"`
	Jaccard       jsonTest `json:"jaccard"`
	Disparity     jsonTest `json:"disparity"`
	// Trustworthiness change is absolute; KL change is relative (0.05 = 5%).
	Trust    jsonChange `json:"trustworthiness"`
	KL       jsonChange `json:"kl_relative"`
	Moved    []any      `json:"neighbourhood_changed_most"`
	Failures []string   `json:"failures"`
	Notes    []string   `json:"notes"`
}

// JSON encodes the result for machines (NaN as null), indented.
func (r *Result) JSON() ([]byte, error) {
	o := r.Options
	out := struct {
		Outcome      Outcome        `json:"outcome"`
		ExitCode     int            `json:"exit_code"`
		Reason       string         `json:"reason"`
		Baseline     string         `json:"baseline"`
		Current      string         `json:"current"`
		Test         string         `json:"test"`
		Thresholds   map[string]any `json:"thresholds"`
		Settings     []jsonSetting  `json:"settings"`
		OnlyBaseline []string       `json:"only_in_baseline"`
		OnlyCurrent  []string       `json:"only_in_current"`
		PlanDiffs    []string       `json:"plan_differences"`
	}{Outcome: r.Outcome, ExitCode: r.ExitCode(), Reason: r.Reason, Baseline: r.Baseline, Current: r.Current, Test: r.TestDescription(),
		Settings: []jsonSetting{}, OnlyBaseline: nonNil(r.OnlyBaseline), OnlyCurrent: nonNil(r.OnlyCurrent), PlanDiffs: nonNil(r.PlanDiffs)}
	out.Thresholds = map[string]any{
		"alpha": o.Alpha, "bonferroni_divisor": r.Divisor, "tests_reaching_level": r.Testable, "min_jaccard_shift": o.MinJaccardShift, "min_disparity_shift": o.MinDisparityShift,
		"max_trust_drop": o.MaxTrustDrop, "max_kl_rise_relative": o.MaxKLRise, "exact_tolerance": o.ExactTolerance,
		"k": r.K, "k_baseline": r.KBaseline, "k_current": r.KCurrent, "moved": o.Moved,
	}
	for _, s := range r.Settings {
		js := jsonSetting{Label: s.Label, BaselineID: s.BaselineID, CurrentID: s.CurrentID, Status: s.Status(),
			RunsBaseline: s.RunsBaseline, RunsCurrent: s.RunsCurrent, Points: s.Points, MissingPoints: s.MissingPoints,
			Jaccard: toJSONTest(s.Jaccard), Disparity: toJSONTest(s.Disparity),
			Trust:    jsonChange{num(s.Trust.Baseline), num(s.Trust.Current), num(s.Trust.Change), s.Trust.Failed},
			KL:       jsonChange{num(s.KL.Baseline), num(s.KL.Current), num(s.KL.Change), s.KL.Failed},
			Failures: nonNil(s.Failures), Notes: nonNil(s.Notes), Moved: []any{}}
		if rp := s.Reproduction; rp != nil {
			js.Reproduction = map[string]any{"pairs": rp.Pairs, "matched": rp.Matched, "worst_relative_rms": num(rp.Worst), "worst_seed": rp.WorstSeed}
		}
		for _, m := range s.Moved {
			js.Moved = append(js.Moved, map[string]any{"id": m.ID, "jaccard_change": num(m.Change)})
		}
		out.Settings = append(out.Settings, js)
	}
	b, err := json.MarshalIndent(out, "", "  ")
	if err != nil {
		return nil, fmt.Errorf("gate: %w", err)
	}
	return append(b, '\n'), nil
}

// ExitCode is the exit status plumb check gives the outcome: 0 pass, 1
// regression, 3 data changed, 4 untested (too few runs), 2 incomparable.
func (r *Result) ExitCode() int {
	switch r.Outcome {
	case Pass:
		return 0
	case Regression:
		return 1
	case DataChanged:
		return 3
	case Untested:
		return 4
	}
	return 2
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func f4(x float64) string {
	if !finite(x) {
		return "–"
	}
	return fmt.Sprintf("%.4f", x)
}

func signed(x float64) string {
	if !finite(x) {
		return "–"
	}
	return fmt.Sprintf("%+.4f", x)
}

func pct(x float64) string {
	if !finite(x) {
		return "–"
	}
	return fmt.Sprintf("%+.1f%%", 100*x)
}

func pval(t Test) string {
	switch {
	case !finite(t.P):
		return "–"
	case !t.Tested:
		return fmt.Sprintf("(%.2g)", t.P)
	}
	return fmt.Sprintf("%.2g", t.P)
}

// Text renders the result as a table for people.
func (r *Result) Text() string {
	var b strings.Builder
	fmt.Fprintf(&b, "baseline %s (k = %d)\ncurrent  %s (k = %d)\n", r.Baseline, r.KBaseline, r.Current, r.KCurrent)
	if r.Outcome == DataChanged || (r.Outcome == Incomparable && len(r.Settings) == 0) {
		fmt.Fprintf(&b, "outcome: %s: %s\n", strings.ToUpper(string(r.Outcome)), r.Reason)
		return b.String()
	}
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "verdict\tsetting\truns\treproduced\tjaccard within→across\tshift\tp\tdisparity within→across\tshift\tp\tΔtrust\tΔKL")
	for _, s := range r.Settings {
		rep := "–"
		if rp := s.Reproduction; rp != nil {
			rep = fmt.Sprintf("%d/%d", rp.Matched, rp.Pairs)
		}
		within := func(t Test) string {
			w := t.WithinBaseline
			if finite(t.WithinBaseline) && finite(t.WithinCurrent) {
				w = (t.WithinBaseline + t.WithinCurrent) / 2
			} else if !finite(w) {
				w = t.WithinCurrent
			}
			return f4(w) + "→" + f4(t.Across)
		}
		fmt.Fprintf(tw, "%s\t%s\t%d/%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", strings.ToUpper(s.Status()), s.Label,
			s.RunsBaseline, s.RunsCurrent, rep, within(s.Jaccard), signed(s.Jaccard.Shift), pval(s.Jaccard),
			within(s.Disparity), signed(s.Disparity.Shift), pval(s.Disparity), signed(s.Trust.Change), pct(s.KL.Change))
	}
	tw.Flush()
	fmt.Fprintf(&b, "runs: baseline/current; reproduced: runs identical to the baseline run of the same seed and start; "+
		"shift: how much less alike runs across the studies are than runs within one (Jaccard in overlap, disparity in disparity units); "+
		"p in brackets: not tested (too few runs); ΔKL relative\n")
	for _, s := range r.Settings {
		if s.Pass() && len(s.Notes) == 0 {
			continue
		}
		fmt.Fprintf(&b, "\n%s %s:\n", strings.ToUpper(s.Status()), s.Label)
		for _, f := range s.Failures {
			fmt.Fprintf(&b, "  - %s\n", f)
		}
		for _, n := range s.Notes {
			fmt.Fprintf(&b, "  - %s\n", n)
		}
		if len(s.Moved) > 0 && !s.Pass() {
			var parts []string
			for _, m := range s.Moved {
				parts = append(parts, fmt.Sprintf("%s (%.2f)", m.ID, m.Change))
			}
			fmt.Fprintf(&b, "  neighbourhoods changed most (kNN Jaccard within − across): %s\n", strings.Join(parts, ", "))
		}
	}
	if len(r.OnlyBaseline) > 0 {
		fmt.Fprintf(&b, "\nmissing from the current study: %s\n", strings.Join(r.OnlyBaseline, "; "))
	}
	if len(r.OnlyCurrent) > 0 {
		fmt.Fprintf(&b, "\nnew in the current study (not checked): %s\n", strings.Join(r.OnlyCurrent, "; "))
	}
	fmt.Fprintf(&b, "\n%s\n", r.TestDescription())
	fmt.Fprintf(&b, "\noutcome: %s: %s\n", strings.ToUpper(string(r.Outcome)), r.Reason)
	return b.String()
}

type junitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

type junitSkipped struct {
	Message string `xml:"message,attr"`
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Time      string        `xml:"time,attr"`
	Failure   *junitFailure `xml:"failure,omitempty"`
	Error     *junitFailure `xml:"error,omitempty"`
	Skipped   *junitSkipped `xml:"skipped,omitempty"`
	SystemOut string        `xml:"system-out,omitempty"`
}

type junitSuite struct {
	XMLName  xml.Name    `xml:"testsuite"`
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Skipped  int         `xml:"skipped,attr"`
	Cases    []junitCase `xml:"testcase"`
}

// JUnit renders the result as a JUnit XML test suite: one test case per
// matched setting (failed when it changed, skipped when it could not be
// tested), one failed case per setting missing from the current study,
// and a single errored case when the studies were not compared.
func (r *Result) JUnit() ([]byte, error) {
	s := junitSuite{Name: "plumb check"}
	if r.Outcome == DataChanged || (r.Outcome == Incomparable && len(r.Settings) == 0) {
		s.Cases = append(s.Cases, junitCase{Name: "comparable studies", Classname: "plumb.check", Time: "0",
			Error: &junitFailure{Message: r.Reason, Type: string(r.Outcome), Text: r.Reason}})
		s.Errors = 1
	}
	for _, st := range r.Settings {
		c := junitCase{Name: st.Label, Classname: "plumb.check", Time: "0",
			SystemOut: fmt.Sprintf("runs %d/%d; kNN Jaccard shift %s (p %s); disparity shift %s (p %s); Δtrustworthiness %s; ΔKL %s",
				st.RunsBaseline, st.RunsCurrent, signed(st.Jaccard.Shift), pval(st.Jaccard), signed(st.Disparity.Shift), pval(st.Disparity),
				signed(st.Trust.Change), pct(st.KL.Change))}
		switch st.Status() {
		case "fail":
			c.Failure = &junitFailure{Message: strings.Join(st.Failures, "; "), Type: "regression", Text: strings.Join(st.Failures, "\n")}
			s.Failures++
		case "untested":
			c.Skipped = &junitSkipped{Message: strings.Join(st.Notes, "; ")}
			s.Skipped++
		}
		s.Cases = append(s.Cases, c)
	}
	for _, l := range r.OnlyBaseline {
		s.Cases = append(s.Cases, junitCase{Name: l, Classname: "plumb.check", Time: "0",
			Failure: &junitFailure{Message: "setting missing from the current study", Type: "regression"}})
		s.Failures++
	}
	s.Tests = len(s.Cases)
	var buf bytes.Buffer
	buf.WriteString(xml.Header)
	enc := xml.NewEncoder(&buf)
	enc.Indent("", "  ")
	if err := enc.Encode(s); err != nil {
		return nil, fmt.Errorf("gate: %w", err)
	}
	buf.WriteByte('\n')
	return buf.Bytes(), nil
}
