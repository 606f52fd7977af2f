package gate

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"

	"plumb/sweep"
)

// Study is what the gate reads of a study directory: the input's
// fingerprint, the plan's fields, the k of its score tables, the point ids
// and, per setting, its finished runs. Load builds it from a study on disk;
// tests build it by hand.
type Study struct {
	Dir         string
	Fingerprint string
	// Plan holds every field of study.json's plan, as JSON text by name.
	Plan map[string]string
	// K is the neighbourhood size the study was scored with.
	K int
	// IDs names the points, in the order of every layout.
	IDs      []string
	Settings []Setting
}

// Param is one parameter of a setting, with its value as text.
type Param struct{ Name, Value string }

// Setting is one setting of a study and its runs.
type Setting struct {
	ID     string
	Params []Param
	// Runs are the finished runs in seed order; Failed counts failed runs
	// and FailReason gives one reason.
	Runs       []Run
	Failed     int
	FailReason string
}

// Run is one finished run.
type Run struct {
	Seed uint64
	// KL is the final KL divergence and Trust the trustworthiness (NaN when
	// not scored).
	KL, Trust float64
	// Layout returns the run's layout (2 values per point, in the order of
	// Study.IDs).
	Layout func() ([]float64, error)
}

// Param returns the value of the named parameter, or "".
func (s *Setting) Param(name string) string {
	for _, p := range s.Params {
		if p.Name == name {
			return p.Value
		}
	}
	return ""
}

// orderedFields returns the fields of the JSON object encoding v, in order,
// with their values as compact JSON text.
func orderedFields(v any) ([]Param, error) {
	b, err := json.Marshal(v)
	if err != nil {
		return nil, err
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	if _, err := dec.Token(); err != nil { // {
		return nil, err
	}
	var out []Param
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, err
		}
		var raw json.RawMessage
		if err := dec.Decode(&raw); err != nil {
			return nil, err
		}
		out = append(out, Param{Name: t.(string), Value: string(raw)})
	}
	return out, nil
}

// Load reads what the gate needs of an opened study. Layouts are read when
// the gate asks for them. The study must have been scored (the gate
// compares trustworthiness, which needs the input).
func Load(s *sweep.Study) (*Study, error) {
	if s.SettingScores == nil || s.ScoresK == 0 {
		if s.ScoresProblem != "" {
			return nil, fmt.Errorf("%s: %s (run: plumb score %s)", s.Dir, s.ScoresProblem, s.Dir)
		}
		return nil, fmt.Errorf("%s has no score tables (run: plumb score %s)", s.Dir, s.Dir)
	}
	st := &Study{Dir: s.Dir, Fingerprint: s.Info.Input.Fingerprint, K: s.ScoresK, Plan: map[string]string{}}
	plan, err := orderedFields(s.Plan)
	if err != nil {
		return nil, fmt.Errorf("%s: plan: %w", s.Dir, err)
	}
	for _, p := range plan {
		st.Plan[p.Name] = p.Value
	}
	trust := map[string]float64{}
	for _, r := range s.RunScores {
		trust[r.RunID] = r.Trustworthiness
	}
	index := map[string]int{}
	for _, ps := range s.Settings {
		fields, err := orderedFields(ps)
		if err != nil {
			return nil, fmt.Errorf("%s: setting %s: %w", s.Dir, ps.ID, err)
		}
		set := Setting{ID: ps.ID}
		for _, f := range fields {
			if f.Name == "setting_id" {
				continue
			}
			v := f.Value
			if uq, err := strconv.Unquote(v); err == nil {
				v = uq
			}
			if f.Name == "learning_rate" && v == "0" {
				v = "auto" // 0 stands for auto in the plan
			}
			set.Params = append(set.Params, Param{f.Name, v})
		}
		index[ps.ID] = len(st.Settings)
		st.Settings = append(st.Settings, set)
	}
	n := s.Info.Input.N
	for _, row := range s.Rows {
		i, ok := index[row.SettingID]
		if !ok {
			continue
		}
		set := &st.Settings[i]
		if row.Status != sweep.StatusDone {
			set.Failed++
			if set.FailReason == "" {
				set.FailReason = row.Error
			}
			continue
		}
		t, ok := trust[row.RunID]
		if !ok {
			t = math.NaN()
		}
		id := row.RunID
		set.Runs = append(set.Runs, Run{Seed: row.Seed, KL: row.KL, Trust: t, Layout: func() ([]float64, error) {
			l, err := s.Layout(id)
			if err != nil {
				return nil, err
			}
			return inInputOrder(l, n)
		}})
		if st.IDs == nil {
			l, err := s.Layout(id)
			if err != nil {
				return nil, err
			}
			if len(l.Point) != n {
				continue // a subsampled run: ids from a run of all points
			}
			st.IDs = make([]string, n)
			for j, p := range l.Point {
				if int(p) < 0 || int(p) >= n {
					return nil, fmt.Errorf("%s: layout of run %s: point %d outside 0..%d", s.Dir, id, p, n-1)
				}
				st.IDs[p] = l.IDs[j]
			}
		}
	}
	return st, nil
}

// inInputOrder returns the layout's coordinates in input row order.
func inInputOrder(l *sweep.Layout, n int) ([]float64, error) {
	if len(l.Point) != n || len(l.Y) != 2*n {
		return nil, fmt.Errorf("layout of run %s has %d points, want %d", l.RunID, len(l.Point), n)
	}
	y := make([]float64, 2*n)
	for j, p := range l.Point {
		if int(p) < 0 || int(p) >= n {
			return nil, fmt.Errorf("layout of run %s: point %d outside 0..%d", l.RunID, p, n-1)
		}
		y[2*p], y[2*p+1] = l.Y[2*j], l.Y[2*j+1]
	}
	return y, nil
}
