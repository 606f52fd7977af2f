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

type jsonChange struct {
	Score    string `json:"score"`
	Baseline num    `json:"baseline"`
	Current  num    `json:"current"`
	Change   num    `json:"change"`
	Failed   bool   `json:"failed"`
}

type jsonMoved struct {
	ID       string `json:"id"`
	Distance num    `json:"distance"`
}

type jsonSetting struct {
	Label          string       `json:"label"`
	BaselineID     string       `json:"baseline_id"`
	CurrentID      string       `json:"current_id"`
	Pass           bool         `json:"pass"`
	Points         int          `json:"points"`
	MissingPoints  int          `json:"missing_points"`
	Disparity      num          `json:"disparity_to_baseline"`
	DisparityLimit num          `json:"disparity_limit"`
	Jaccard        num          `json:"jaccard_to_baseline"`
	JaccardLimit   num          `json:"jaccard_limit"`
	K              int          `json:"k"`
	Changes        []jsonChange `json:"changes"`
	Moved          []jsonMoved  `json:"moved_most"`
	Failures       []string     `json:"failures"`
}

// JSON encodes the result for machines (NaN as null), indented.
func (r *Result) JSON() ([]byte, error) {
	out := struct {
		Outcome      Outcome       `json:"outcome"`
		Reason       string        `json:"reason"`
		Baseline     string        `json:"baseline"`
		Current      string        `json:"current"`
		Thresholds   any           `json:"thresholds"`
		Settings     []jsonSetting `json:"settings"`
		OnlyBaseline []string      `json:"only_in_baseline"`
		OnlyCurrent  []string      `json:"only_in_current"`
	}{Outcome: r.Outcome, Reason: r.Reason, Baseline: r.Baseline, Current: r.Current,
		Settings: []jsonSetting{}, OnlyBaseline: nonNil(r.OnlyBaseline), OnlyCurrent: nonNil(r.OnlyCurrent)}
	t := r.Thresholds
	out.Thresholds = map[string]any{
		"max_disparity": t.MaxDisparity, "min_jaccard": t.MinJaccard, "seed_factor": t.SeedFactor,
		"max_trust_drop": t.MaxTrustDrop, "max_stability_loss": t.MaxStabilityLoss, "max_kl_rise": t.MaxKLRise,
		"k": t.K, "moved": t.Moved,
	}
	for _, s := range r.Settings {
		js := jsonSetting{Label: s.Label, BaselineID: s.BaselineID, CurrentID: s.CurrentID, Pass: s.Pass(), Points: s.Points,
			MissingPoints: s.MissingPoints, Disparity: num(s.Disparity), DisparityLimit: num(s.DisparityLimit),
			Jaccard: num(s.Jaccard), JaccardLimit: num(s.JaccardLimit), K: s.K, Failures: nonNil(s.Failures),
			Changes: []jsonChange{}, Moved: []jsonMoved{}}
		for _, c := range s.Changes {
			js.Changes = append(js.Changes, jsonChange{c.Score, num(c.Baseline), num(c.Current), num(c.Change), c.Failed})
		}
		for _, m := range s.Moved {
			js.Moved = append(js.Moved, jsonMoved{m.ID, num(m.Distance)})
		}
		out.Settings = append(out.Settings, js)
	}
	b, err := json.MarshalIndent(out, "", "  ")
	if err != nil {
		return nil, fmt.Errorf("gate: %w", err)
	}
	return append(b, '\n'), nil
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

// Text renders the result as a table for people.
func (r *Result) Text() string {
	var b strings.Builder
	fmt.Fprintf(&b, "baseline %s\ncurrent  %s\n", r.Baseline, r.Current)
	if r.Outcome == Incomparable {
		fmt.Fprintf(&b, "outcome: INCOMPARABLE: %s\n", r.Reason)
		return b.String()
	}
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "verdict\tsetting\tpoints\tdisparity\t(limit)\tjaccard\t(limit)\tΔtrust\tΔseed disp.\tΔseed jacc.\tΔKL")
	for _, s := range r.Settings {
		v := "ok"
		if !s.Pass() {
			v = "FAIL"
		}
		ch := map[string]float64{}
		for _, c := range s.Changes {
			ch[c.Score] = c.Change
		}
		fmt.Fprintf(tw, "%s\t%s\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", v, s.Label, s.Points,
			f4(s.Disparity), "≤"+f4(s.DisparityLimit), f4(s.Jaccard), "≥"+f4(s.JaccardLimit),
			signed(ch["trustworthiness"]), signed(ch["seed disparity"]), signed(ch["seed Jaccard"]), signed(ch["final KL"]))
	}
	tw.Flush()
	for _, s := range r.Settings {
		if s.Pass() {
			continue
		}
		fmt.Fprintf(&b, "\nFAIL %s:\n", s.Label)
		for _, f := range s.Failures {
			fmt.Fprintf(&b, "  - %s\n", f)
		}
		if len(s.Moved) > 0 {
			var parts []string
			for _, m := range s.Moved {
				parts = append(parts, fmt.Sprintf("%s (%.2f)", m.ID, m.Distance))
			}
			fmt.Fprintf(&b, "  moved most (distance / baseline RMS radius): %s\n", strings.Join(parts, ", "))
		}
	}
	if len(r.OnlyBaseline) > 0 {
		fmt.Fprintf(&b, "\nmissing from the current study: %s\n", strings.Join(r.OnlyBaseline, "; "))
	}
	if len(r.OnlyCurrent) > 0 {
		fmt.Fprintf(&b, "\nnew in the current study (not checked): %s\n", strings.Join(r.OnlyCurrent, "; "))
	}
	fmt.Fprintf(&b, "\noutcome: %s: %s\n", strings.ToUpper(string(r.Outcome)), r.Reason)
	return b.String()
}

type junitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

type junitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Time      string        `xml:"time,attr"`
	Failure   *junitFailure `xml:"failure,omitempty"`
	Error     *junitFailure `xml:"error,omitempty"`
	SystemOut string        `xml:"system-out,omitempty"`
}

type junitSuite struct {
	XMLName  xml.Name    `xml:"testsuite"`
	Name     string      `xml:"name,attr"`
	Tests    int         `xml:"tests,attr"`
	Failures int         `xml:"failures,attr"`
	Errors   int         `xml:"errors,attr"`
	Cases    []junitCase `xml:"testcase"`
}

// JUnit renders the result as a JUnit XML test suite: one test case per
// matched setting (failed when it regressed), one per setting missing from
// the current study, and a single errored case when the studies are
// incomparable.
func (r *Result) JUnit() ([]byte, error) {
	s := junitSuite{Name: "plumb check"}
	if r.Outcome == Incomparable {
		s.Cases = append(s.Cases, junitCase{Name: "comparable studies", Classname: "plumb.check", Time: "0",
			Error: &junitFailure{Message: r.Reason, Type: "incomparable", Text: r.Reason}})
		s.Errors = 1
	}
	for _, st := range r.Settings {
		c := junitCase{Name: st.Label, Classname: "plumb.check", Time: "0",
			SystemOut: fmt.Sprintf("disparity to baseline %s (limit %s), kNN Jaccard to baseline %s (limit %s), %d points",
				f4(st.Disparity), f4(st.DisparityLimit), f4(st.Jaccard), f4(st.JaccardLimit), st.Points)}
		if !st.Pass() {
			c.Failure = &junitFailure{Message: strings.Join(st.Failures, "; "), Type: "regression", Text: strings.Join(st.Failures, "\n")}
			s.Failures++
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
