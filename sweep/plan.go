package sweep

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"plumb/internal/dataset"
	"plumb/tsne"
)

// Spec is a plan as the user wrote it: each field in the command-line
// syntax (comma lists, "auto", seed counts and ranges). An empty field
// takes its default. Spec.Plan parses and validates it.
type Spec struct {
	Perplexity        string `json:"perplexity,omitempty"`         // default "30"
	LearningRate      string `json:"learning_rate,omitempty"`      // default "auto"
	Exaggeration      string `json:"exaggeration,omitempty"`       // default "12"
	ExaggerationIters string `json:"exaggeration_iters,omitempty"` // default "250"
	Iters             string `json:"iters,omitempty"`              // default "1000"
	Init              string `json:"init,omitempty"`               // default "pca"
	Gradient          string `json:"gradient,omitempty"`           // default "auto"
	Theta             string `json:"theta,omitempty"`              // default tsne.DefaultTheta ("0.8")
	Seeds             string `json:"seeds,omitempty"`              // default "1" (one run per setting, seed 1)
	Subsample         string `json:"subsample,omitempty"`          // default "1" (every run embeds all points)
	Neighbors         string `json:"neighbors,omitempty"`          // default "auto"
	KLEvery           string `json:"kl_every,omitempty"`           // default "50"

	// from names the plan file each field came from (ParseSpec), so that
	// errors point at the file rather than at a flag.
	from map[string]string
}

// SpecField describes one field of Spec: its plan-file key (the flag name
// with "_" for "-") and a one-line description with the default. Adding a
// field to Spec means adding it to SpecFields; merging, plan files and the
// command's flags follow from the table.
type SpecField struct {
	// Key is the plan-file key, e.g. "learning_rate".
	Key string
	// Doc describes the values and the default, for help texts.
	Doc string
	ptr func(*Spec) *string
}

// Flag returns the command-line flag name of the field, e.g.
// "learning-rate".
func (f SpecField) Flag() string { return strings.ReplaceAll(f.Key, "_", "-") }

// Get returns the field's value in s.
func (f SpecField) Get(s *Spec) string { return *f.ptr(s) }

// Set sets the field's value in s.
func (f SpecField) Set(s *Spec, v string) { *f.ptr(s) = v }

// SpecFields lists every field of Spec, in the order of the struct.
var SpecFields = []SpecField{
	{"perplexity", "comma list of perplexities (default 30)", func(s *Spec) *string { return &s.Perplexity }},
	{"learning_rate", "comma list of learning rates, numbers or auto (default auto = max(n/(4·exaggeration), 50), 4-in-gradient convention)", func(s *Spec) *string { return &s.LearningRate }},
	{"exaggeration", "comma list of early-exaggeration factors ≥ 1 (default 12)", func(s *Spec) *string { return &s.Exaggeration }},
	{"exaggeration_iters", "comma list of early-exaggeration lengths (default 250)", func(s *Spec) *string { return &s.ExaggerationIters }},
	{"iters", "comma list of total iteration counts (default 1000)", func(s *Spec) *string { return &s.Iters }},
	{"init", "comma list of initialisations: pca, random (default pca)", func(s *Spec) *string { return &s.Init }},
	{"gradient", "comma list of gradient methods: auto, exact, barnes-hut, fft (default auto)", func(s *Spec) *string { return &s.Gradient }},
	{"theta", "Barnes-Hut opening angle (default 0.8; see the README)", func(s *Spec) *string { return &s.Theta }},
	{"seeds", "a count N (seeds 1..N) or a list/range such as 1-5,9 (default 1)", func(s *Spec) *string { return &s.Seeds }},
	{"subsample", "comma list of subsample fractions in (0, 1]: a run of a setting with F < 1 embeds ⌈F·n⌉ points drawn by its seed (default 1, all points)", func(s *Spec) *string { return &s.Subsample }},
	{"neighbors", "neighbour search: auto, exact, approx (default auto)", func(s *Spec) *string { return &s.Neighbors }},
	{"kl_every", "record the KL divergence every N iterations (default 50)", func(s *Spec) *string { return &s.KLEvery }},
}

// specField returns the field with the plan-file key, or false.
func specField(key string) (SpecField, bool) {
	for _, f := range SpecFields {
		if f.Key == key {
			return f, true
		}
	}
	return SpecField{}, false
}

// Merge returns s with every non-empty field of over replacing s's.
// Command-line flags override a plan file this way.
func (s Spec) Merge(over Spec) Spec {
	out := Spec{from: map[string]string{}}
	for _, f := range SpecFields {
		v, from := f.Get(&s), s.from[f.Key]
		if o := f.Get(&over); o != "" {
			v, from = o, over.from[f.Key]
		}
		f.Set(&out, v)
		if from != "" {
			out.from[f.Key] = from
		}
	}
	return out
}

// PlanError reports an invalid plan value.
type PlanError struct {
	// Field is the plan field (the flag name without dashes, e.g.
	// "perplexity"); Value the text given.
	Field, Value, Msg string
	// File is the plan file the value came from, if any.
	File string
}

func (e *PlanError) Error() string {
	where := "--" + strings.ReplaceAll(e.Field, "_", "-")
	if e.File != "" {
		where = e.File + ": " + e.Field
	}
	return fmt.Sprintf("%s %q: %s", where, e.Value, e.Msg)
}

// MaxPlanBytes bounds the size of a plan file (a plan is a few hundred
// bytes; ReadSpec refuses larger files, devices and FIFOs).
const MaxPlanBytes = 1 << 20

// ReadSpec reads a plan file: a JSON object with the fields of Spec. Each
// value may be a string in the flag syntax ("5,15,30", "auto,200",
// "1-5,9"), a number, or an array of numbers and strings. Unknown fields
// are an error.
func ReadSpec(path string) (Spec, error) {
	b, err := dataset.ReadRegular(path, MaxPlanBytes)
	if err != nil {
		return Spec{}, fmt.Errorf("plan file: %w", err)
	}
	return ParseSpec(path, b)
}

// ParseSpec parses the contents of a plan file (see ReadSpec); name is used
// in error messages.
func ParseSpec(name string, data []byte) (Spec, error) {
	var raw map[string]json.RawMessage
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := dec.Decode(&raw); err != nil {
		return Spec{}, fmt.Errorf("%s: not a JSON object: %v", name, err)
	}
	if dec.More() {
		return Spec{}, fmt.Errorf("%s: trailing data after the JSON object", name)
	}
	s := Spec{from: map[string]string{}}
	keys := make([]string, 0, len(raw))
	for k := range raw {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		f, ok := specField(k)
		if !ok {
			return Spec{}, fmt.Errorf("%s: unknown field %q", name, k)
		}
		v, isList, err := specValue(raw[k])
		if err != nil {
			return Spec{}, fmt.Errorf("%s: %s: %v", name, k, err)
		}
		if k == "seeds" && isList && !strings.ContainsAny(v, ",-") {
			// A one-element array is an explicit seed, not a count.
			v = v + "-" + v
		}
		f.Set(&s, v)
		s.from[k] = name
	}
	return s, nil
}

func specValue(m json.RawMessage) (string, bool, error) {
	var v any
	dec := json.NewDecoder(bytes.NewReader(m))
	dec.UseNumber()
	if err := dec.Decode(&v); err != nil {
		return "", false, err
	}
	switch x := v.(type) {
	case string:
		if x == "" {
			return "", false, fmt.Errorf("empty value")
		}
		return x, false, nil
	case json.Number:
		return x.String(), false, nil
	case []any:
		if len(x) == 0 {
			return "", true, fmt.Errorf("empty list")
		}
		parts := make([]string, len(x))
		for i, e := range x {
			switch y := e.(type) {
			case string:
				parts[i] = y
			case json.Number:
				parts[i] = y.String()
			default:
				return "", true, fmt.Errorf("list element %d is neither a number nor a string", i+1)
			}
		}
		return strings.Join(parts, ","), true, nil
	}
	return "", false, fmt.Errorf("want a string, a number or a list")
}

// Plan is a validated, canonical sweep plan: every grid list sorted
// ascending without duplicates. The settings are the Cartesian product of
// the lists; each setting is run once per seed.
type Plan struct {
	Perplexity []float64 `json:"perplexity"`
	// LearningRate holds learning rates in the convention where the factor
	// 4 is part of the gradient (see tsne.Gradient); 0 stands for "auto"
	// (tsne.LearningRateAuto).
	LearningRate      []float64 `json:"learning_rate"`
	Exaggeration      []float64 `json:"exaggeration"`
	ExaggerationIters []int     `json:"exaggeration_iters"`
	Iters             []int     `json:"iters"`
	Init              []string  `json:"init"`
	Gradient          []string  `json:"gradient"`
	// Theta is the Barnes-Hut opening angle, used by "barnes-hut" runs.
	Theta float64  `json:"theta"`
	Seeds []uint64 `json:"seeds"`
	// Subsample lists the subsample fractions in (0, 1], ascending; each
	// run of a setting with fraction F < 1 embeds SubsampleSize(n, F)
	// points drawn by its seed (Subsample). nil stands for {1}, every run
	// embeds all points: a plan without resampling keeps the canonical
	// text and hash it had before the field existed.
	Subsample []float64 `json:"subsample,omitempty"`
	// Neighbors picks the neighbour search: "auto", "exact" or "approx".
	Neighbors string `json:"neighbors"`
	// KLEvery is the KL trace interval in iterations.
	KLEvery int `json:"kl_every"`
}

var (
	inits     = []string{"pca", "random"}
	gradients = []string{"auto", "exact", "barnes-hut", "fft"}
	nbModes   = []string{"auto", "exact", "approx"}
)

// Plan parses and validates s, filling defaults. Every value is checked
// before any work starts; the error (a *PlanError) names the field and the
// value, and the plan file when the value came from one.
func (s Spec) Plan() (*Plan, error) {
	p, err := s.plan()
	var pe *PlanError
	if errors.As(err, &pe) && pe.File == "" {
		pe.File = s.from[pe.Field]
	}
	return p, err
}

func (s Spec) plan() (*Plan, error) {
	def := func(v, d string) string {
		if strings.TrimSpace(v) == "" {
			return d
		}
		return v
	}
	p := &Plan{}
	var err error
	if p.Perplexity, err = floatList("perplexity", def(s.Perplexity, "30"), false, func(v float64) string {
		if v <= 0 {
			return "must be positive"
		}
		if v < 1 {
			// Perplexity is 2^H (or e^H) of a distribution, at least 1
			// (van der Maaten & Hinton 2008, eq. 3 ff.).
			return "must be at least 1 (perplexity is the exponential of an entropy)"
		}
		return ""
	}); err != nil {
		return nil, err
	}
	if p.LearningRate, err = floatList("learning_rate", def(s.LearningRate, "auto"), true, func(v float64) string {
		if v <= 0 {
			return "must be positive or auto"
		}
		return ""
	}); err != nil {
		return nil, err
	}
	if p.Exaggeration, err = floatList("exaggeration", def(s.Exaggeration, "12"), false, func(v float64) string {
		if v < 1 {
			return "must be at least 1 (1 switches early exaggeration off)"
		}
		return ""
	}); err != nil {
		return nil, err
	}
	if p.ExaggerationIters, err = intList("exaggeration_iters", def(s.ExaggerationIters, "250"), 1); err != nil {
		return nil, err
	}
	if p.Iters, err = intList("iters", def(s.Iters, "1000"), 1); err != nil {
		return nil, err
	}
	if p.ExaggerationIters[len(p.ExaggerationIters)-1] > p.Iters[0] {
		return nil, &PlanError{Field: "iters", Value: def(s.Iters, "1000"),
			Msg: fmt.Sprintf("%d iterations is fewer than %d exaggeration iterations", p.Iters[0], p.ExaggerationIters[len(p.ExaggerationIters)-1])}
	}
	if p.Init, err = wordList("init", def(s.Init, "pca"), inits); err != nil {
		return nil, err
	}
	if p.Gradient, err = wordList("gradient", def(s.Gradient, "auto"), gradients); err != nil {
		return nil, err
	}
	th, err := floatList("theta", def(s.Theta, strconv.FormatFloat(tsne.DefaultTheta, 'g', -1, 64)), false, func(v float64) string {
		if v <= 0 || v > 10 {
			return "must be in (0, 10]"
		}
		return ""
	})
	if err != nil {
		return nil, err
	}
	if len(th) != 1 {
		return nil, &PlanError{Field: "theta", Value: s.Theta, Msg: "takes one value"}
	}
	p.Theta = th[0]
	if p.Seeds, err = ParseSeeds(def(s.Seeds, "1")); err != nil {
		return nil, err
	}
	if p.Subsample, err = floatList("subsample", def(s.Subsample, "1"), false, func(v float64) string {
		if v <= 0 || v > 1 {
			return "must be in (0, 1] (a fraction of the points)"
		}
		return ""
	}); err != nil {
		return nil, err
	}
	if len(p.Subsample) == 1 && p.Subsample[0] == 1 {
		p.Subsample = nil
	}
	nb, err := wordList("neighbors", def(s.Neighbors, "auto"), nbModes)
	if err != nil {
		return nil, err
	}
	if len(nb) != 1 {
		return nil, &PlanError{Field: "neighbors", Value: s.Neighbors, Msg: "takes one value"}
	}
	p.Neighbors = nb[0]
	ke, err := intList("kl_every", def(s.KLEvery, "50"), 1)
	if err != nil {
		return nil, err
	}
	if len(ke) != 1 {
		return nil, &PlanError{Field: "kl_every", Value: s.KLEvery, Msg: "takes one value"}
	}
	p.KLEvery = ke[0]
	return p, nil
}

func splitList(field, s string) ([]string, error) {
	parts := strings.Split(s, ",")
	for i := range parts {
		parts[i] = strings.TrimSpace(parts[i])
		if parts[i] == "" {
			return nil, &PlanError{Field: field, Value: s, Msg: "empty list element"}
		}
	}
	return parts, nil
}

func floatList(field, s string, auto bool, check func(float64) string) ([]float64, error) {
	parts, err := splitList(field, s)
	if err != nil {
		return nil, err
	}
	out := make([]float64, 0, len(parts))
	for _, t := range parts {
		if auto && strings.EqualFold(t, "auto") {
			out = append(out, 0)
			continue
		}
		v, err := strconv.ParseFloat(t, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, &PlanError{Field: field, Value: t, Msg: "not a finite number"}
		}
		if msg := check(v); msg != "" {
			return nil, &PlanError{Field: field, Value: t, Msg: msg}
		}
		out = append(out, v)
	}
	sort.Float64s(out)
	for i := 1; i < len(out); i++ {
		if out[i] == out[i-1] {
			return nil, &PlanError{Field: field, Value: s, Msg: "duplicate value " + formatFloat(out[i])}
		}
	}
	return out, nil
}

func intList(field, s string, min int) ([]int, error) {
	parts, err := splitList(field, s)
	if err != nil {
		return nil, err
	}
	out := make([]int, 0, len(parts))
	for _, t := range parts {
		v, err := strconv.Atoi(t)
		if err != nil {
			return nil, &PlanError{Field: field, Value: t, Msg: "not a whole number"}
		}
		if v < min || v > 1e8 {
			return nil, &PlanError{Field: field, Value: t, Msg: fmt.Sprintf("must be between %d and 100000000", min)}
		}
		out = append(out, v)
	}
	sort.Ints(out)
	for i := 1; i < len(out); i++ {
		if out[i] == out[i-1] {
			return nil, &PlanError{Field: field, Value: s, Msg: fmt.Sprintf("duplicate value %d", out[i])}
		}
	}
	return out, nil
}

func wordList(field, s string, allowed []string) ([]string, error) {
	parts, err := splitList(field, s)
	if err != nil {
		return nil, err
	}
	seen := map[string]bool{}
	var out []string
	for _, t := range parts {
		t = strings.ToLower(t)
		if t == "bh" || t == "barneshut" {
			t = "barnes-hut"
		}
		ok := false
		for _, a := range allowed {
			ok = ok || a == t
		}
		if !ok {
			return nil, &PlanError{Field: field, Value: t, Msg: "want one of " + strings.Join(allowed, ", ")}
		}
		if seen[t] {
			return nil, &PlanError{Field: field, Value: s, Msg: "duplicate value " + t}
		}
		seen[t] = true
	}
	// Canonical order: the order of allowed.
	for _, a := range allowed {
		if seen[a] {
			out = append(out, a)
		}
	}
	return out, nil
}

// maxSeeds bounds the number of seeds one plan may list.
const maxSeeds = 100000

// MaxSeed is the largest seed a plan may list, 2^63 − 1: the study tables
// store seeds in a signed 64-bit column (runs.parquet and the score tables
// "seed"), which every Parquet reader handles, so larger seeds would be
// written as negative numbers.
const MaxSeed = math.MaxInt64

// ParseSeeds parses a seed specification: a single whole number N is a
// count and means the seeds 1..N; anything else is a comma list of seeds
// and inclusive ranges, e.g. "1-5,9" (use "7-7" for the single seed 7).
// Seeds are returned sorted, without duplicates (a duplicate is an error).
// Every seed is at most MaxSeed.
func ParseSeeds(s string) ([]uint64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return nil, &PlanError{Field: "seeds", Value: s, Msg: "empty"}
	}
	if n, err := strconv.ParseUint(s, 10, 64); err == nil {
		if n == 0 {
			return nil, &PlanError{Field: "seeds", Value: s, Msg: "a seed count must be at least 1"}
		}
		if n > maxSeeds {
			return nil, &PlanError{Field: "seeds", Value: s, Msg: fmt.Sprintf("more than %d seeds", maxSeeds)}
		}
		out := make([]uint64, n)
		for i := range out {
			out[i] = uint64(i + 1)
		}
		return out, nil
	}
	parts, err := splitList("seeds", s)
	if err != nil {
		return nil, err
	}
	var out []uint64
	for _, t := range parts {
		lo, hi := t, t
		if i := strings.Index(t, "-"); i >= 0 {
			lo, hi = strings.TrimSpace(t[:i]), strings.TrimSpace(t[i+1:])
		}
		a, err1 := strconv.ParseUint(lo, 10, 64)
		b, err2 := strconv.ParseUint(hi, 10, 64)
		if err1 != nil || err2 != nil {
			return nil, &PlanError{Field: "seeds", Value: t, Msg: "want a whole number ≥ 0 or a range A-B"}
		}
		if b < a {
			return nil, &PlanError{Field: "seeds", Value: t, Msg: "range ends before it starts"}
		}
		if b > MaxSeed {
			return nil, &PlanError{Field: "seeds", Value: t, Msg: fmt.Sprintf("a seed must be at most %d (2^63−1, the largest the study tables store)", uint64(MaxSeed))}
		}
		if b-a >= maxSeeds || len(out)+int(b-a+1) > maxSeeds {
			return nil, &PlanError{Field: "seeds", Value: s, Msg: fmt.Sprintf("more than %d seeds", maxSeeds)}
		}
		for v := a; ; v++ {
			out = append(out, v)
			if v == b {
				break
			}
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i] < out[j] })
	for i := 1; i < len(out); i++ {
		if out[i] == out[i-1] {
			return nil, &PlanError{Field: "seeds", Value: s, Msg: fmt.Sprintf("seed %d listed twice", out[i])}
		}
	}
	return out, nil
}

// MaxPerplexity returns the largest perplexity of the plan; the shared
// neighbour lists are built for it.
func (p *Plan) MaxPerplexity() float64 { return p.Perplexity[len(p.Perplexity)-1] }

// Fractions returns the plan's subsample fractions: Subsample, or {1}
// when it is nil.
func (p *Plan) Fractions() []float64 {
	if len(p.Subsample) == 0 {
		return []float64{1}
	}
	return p.Subsample
}

// MinFraction returns the smallest subsample fraction of the plan (1 when
// it does not resample).
func (p *Plan) MinFraction() float64 { return p.Fractions()[0] }

// NumSettings returns the number of settings (grid cells).
func (p *Plan) NumSettings() int {
	return len(p.Perplexity) * len(p.LearningRate) * len(p.Exaggeration) * len(p.ExaggerationIters) *
		len(p.Iters) * len(p.Init) * len(p.Gradient) * len(p.Fractions())
}

// NumRuns returns the number of runs: settings × seeds.
func (p *Plan) NumRuns() int { return p.NumSettings() * len(p.Seeds) }

// Setting is one combination of parameters.
type Setting struct {
	// ID is derived from the values (see SettingID).
	ID         string  `json:"setting_id"`
	Perplexity float64 `json:"perplexity"`
	// LearningRate is as planned; 0 means auto.
	LearningRate      float64 `json:"learning_rate"`
	Exaggeration      float64 `json:"exaggeration"`
	ExaggerationIters int     `json:"exaggeration_iters"`
	Iters             int     `json:"iters"`
	Init              string  `json:"init"`
	Gradient          string  `json:"gradient"`
	Theta             float64 `json:"theta"`
	// Subsample is the fraction of the points each run embeds, in (0, 1];
	// 1 (or 0, in a Setting built by hand) means all points.
	Subsample float64 `json:"subsample,omitempty"`
}

// Fraction returns the setting's subsample fraction, 1 for all points.
func (s *Setting) Fraction() float64 {
	if s.Subsample <= 0 || s.Subsample >= 1 {
		return 1
	}
	return s.Subsample
}

// LearningRateSpec returns "auto" or the planned learning rate as text.
func (s *Setting) LearningRateSpec() string {
	if s.LearningRate == 0 {
		return "auto"
	}
	return formatFloat(s.LearningRate)
}

// Canonical returns the setting's canonical encoding, from which its id is
// derived. The encoding is versioned and must never change: ids written by
// one version must be found again by every later one. The subsample
// fraction is appended ("|subsample=0.9") only when it is below 1, so a
// setting on all points keeps the id it had before resampling existed.
func (s *Setting) Canonical() string {
	sub := ""
	if f := s.Fraction(); f < 1 {
		sub = "|subsample=" + formatFloat(f)
	}
	return "plumb-setting-v1" +
		"|perplexity=" + formatFloat(s.Perplexity) +
		"|learning_rate=" + s.LearningRateSpec() +
		"|exaggeration=" + formatFloat(s.Exaggeration) +
		"|exaggeration_iters=" + strconv.Itoa(s.ExaggerationIters) +
		"|iters=" + strconv.Itoa(s.Iters) +
		"|init=" + s.Init +
		"|gradient=" + s.Gradient +
		"|theta=" + formatFloat(s.Theta) + sub
}

// SettingID returns the id of a setting: the first 10 hex digits of the
// SHA-256 of its canonical encoding (Canonical). Ids depend only on the
// values, never on the machine, the shard or the order of the grid.
func SettingID(s *Setting) string {
	h := sha256.Sum256([]byte(s.Canonical()))
	return hex.EncodeToString(h[:5])
}

// RunID returns the id of the run of setting id settingID with seed:
// "<setting id>-<seed>".
func RunID(settingID string, seed uint64) string {
	return settingID + "-" + strconv.FormatUint(seed, 10)
}

// Run is one setting with one seed.
type Run struct {
	ID      string
	Setting *Setting
	Seed    uint64
	// Index is the run's position in the plan's run order.
	Index int
}

// Settings returns the plan's settings in canonical order (perplexity
// outermost, then learning rate, exaggeration, exaggeration iterations,
// iterations, init, gradient, subsample fraction).
func (p *Plan) Settings() []*Setting {
	var out []*Setting
	for _, perp := range p.Perplexity {
		for _, lr := range p.LearningRate {
			for _, ex := range p.Exaggeration {
				for _, ei := range p.ExaggerationIters {
					for _, it := range p.Iters {
						for _, in := range p.Init {
							for _, g := range p.Gradient {
								for _, f := range p.Fractions() {
									s := &Setting{Perplexity: perp, LearningRate: lr, Exaggeration: ex,
										ExaggerationIters: ei, Iters: it, Init: in, Gradient: g, Theta: p.Theta, Subsample: f}
									s.ID = SettingID(s)
									out = append(out, s)
								}
							}
						}
					}
				}
			}
		}
	}
	return out
}

// Runs returns every run of the plan: settings in canonical order, seeds
// ascending within each setting. It returns an error in the (astronomically
// unlikely) case of two settings sharing an id, or of a seed above MaxSeed
// (possible only in a Plan built by hand, not by Spec.Plan).
func (p *Plan) Runs() ([]*Run, error) {
	for _, seed := range p.Seeds {
		if seed > MaxSeed {
			return nil, fmt.Errorf("sweep: seed %d is above the largest seed the study tables store, %d", seed, uint64(MaxSeed))
		}
	}
	settings := p.Settings()
	seen := make(map[string]*Setting, len(settings))
	for _, s := range settings {
		if o, ok := seen[s.ID]; ok {
			return nil, fmt.Errorf("sweep: settings %q and %q share the id %s", o.Canonical(), s.Canonical(), s.ID)
		}
		seen[s.ID] = s
	}
	runs := make([]*Run, 0, len(settings)*len(p.Seeds))
	for _, s := range settings {
		for _, seed := range p.Seeds {
			runs = append(runs, &Run{ID: RunID(s.ID, seed), Setting: s, Seed: seed, Index: len(runs)})
		}
	}
	return runs, nil
}

// Canonical returns the plan's canonical encoding (versioned, stable).
func (p *Plan) Canonical() string {
	var b strings.Builder
	b.WriteString("plumb-plan-v1")
	fl := func(name string, v []float64, auto bool) {
		b.WriteString("|" + name + "=")
		for i, x := range v {
			if i > 0 {
				b.WriteByte(',')
			}
			if auto && x == 0 {
				b.WriteString("auto")
			} else {
				b.WriteString(formatFloat(x))
			}
		}
	}
	il := func(name string, v []int) {
		b.WriteString("|" + name + "=")
		for i, x := range v {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteString(strconv.Itoa(x))
		}
	}
	fl("perplexity", p.Perplexity, false)
	fl("learning_rate", p.LearningRate, true)
	fl("exaggeration", p.Exaggeration, false)
	il("exaggeration_iters", p.ExaggerationIters)
	il("iters", p.Iters)
	b.WriteString("|init=" + strings.Join(p.Init, ","))
	b.WriteString("|gradient=" + strings.Join(p.Gradient, ","))
	b.WriteString("|theta=" + formatFloat(p.Theta))
	b.WriteString("|seeds=")
	for i, s := range p.Seeds {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(strconv.FormatUint(s, 10))
	}
	b.WriteString("|neighbors=" + p.Neighbors)
	b.WriteString("|kl_every=" + strconv.Itoa(p.KLEvery))
	if f := p.Fractions(); len(f) > 1 || f[0] != 1 {
		// Only a plan that resamples names the field, so the hash of every
		// plan made before it existed stays the same.
		fl("subsample", p.Subsample, false)
	}
	return b.String()
}

// Hash returns the plan hash: the hex SHA-256 of Canonical, truncated to
// 16 digits. Two plans with the same runs and shared work have the same
// hash, whatever the order their lists were written in.
func (p *Plan) Hash() string {
	h := sha256.Sum256([]byte(p.Canonical()))
	return hex.EncodeToString(h[:8])
}

// formatFloat is the shortest decimal that parses back to v exactly.
func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
