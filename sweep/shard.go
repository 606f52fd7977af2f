package sweep

import (
	"fmt"
	"strconv"
	"strings"
)

// Shard is one slice of a sweep's runs: shard Index of Count (0-based).
// The zero value and {0, 1} both mean the whole sweep.
type Shard struct {
	Index, Count int
	// Source says where the shard came from ("--shard", "Slurm array",
	// "Kubernetes indexed job" or "" for none); informational only.
	Source string
}

// Whole reports whether s covers every run.
func (s Shard) Whole() bool { return s.Count <= 1 }

func (s Shard) String() string {
	if s.Whole() {
		return "all runs"
	}
	return fmt.Sprintf("shard %d/%d", s.Index, s.Count)
}

// Owns reports whether the run at position index of the plan's run order
// belongs to the shard. Runs are dealt round-robin: run i goes to shard
// i mod Count, so shard sizes differ by at most one, every run is in
// exactly one shard, and the assignment depends only on the plan.
func (s Shard) Owns(index int) bool {
	if s.Whole() {
		return true
	}
	return index%s.Count == s.Index
}

// Select returns the runs of the shard, in plan order.
func (s Shard) Select(runs []*Run) []*Run {
	var out []*Run
	for _, r := range runs {
		if s.Owns(r.Index) {
			out = append(out, r)
		}
	}
	return out
}

// ParseShard parses "I/N" with 0 ≤ I < N.
func ParseShard(v string) (Shard, error) {
	i := strings.Index(v, "/")
	if i < 0 {
		return Shard{}, fmt.Errorf("--shard %q: want I/N, e.g. 0/4", v)
	}
	a, err1 := strconv.Atoi(strings.TrimSpace(v[:i]))
	b, err2 := strconv.Atoi(strings.TrimSpace(v[i+1:]))
	if err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("--shard %q: want I/N with whole numbers, e.g. 0/4", v)
	}
	if b < 1 {
		return Shard{}, fmt.Errorf("--shard %q: the number of shards must be at least 1", v)
	}
	if a < 0 || a >= b {
		return Shard{}, fmt.Errorf("--shard %q: shard index must be 0..%d (0-based)", v, b-1)
	}
	return Shard{Index: a, Count: b, Source: "--shard"}, nil
}

// ResolveShard picks the shard of this process. In order of precedence:
//
//   - flag ("I/N", from --shard) if non-empty;
//   - a Slurm job array: SLURM_ARRAY_TASK_ID with SLURM_ARRAY_TASK_MIN and
//     SLURM_ARRAY_TASK_MAX (and SLURM_ARRAY_TASK_STEP if set), giving
//     index (ID−MIN)/STEP of (MAX−MIN)/STEP+1, or with
//     SLURM_ARRAY_TASK_COUNT, giving index ID−MIN (MIN defaults to 0) of
//     COUNT;
//   - a Kubernetes Indexed Job: JOB_COMPLETION_INDEX with shards (from
//     --shards) as the count;
//   - otherwise the whole sweep.
//
// shards > 0 with neither Slurm nor Kubernetes variables is an error, as is
// a shards value that contradicts the Slurm array's size. getenv is
// usually os.Getenv.
func ResolveShard(flag string, shards int, getenv func(string) string) (Shard, error) {
	if shards < 0 {
		return Shard{}, fmt.Errorf("--shards %d: must be positive", shards)
	}
	if strings.TrimSpace(flag) != "" {
		s, err := ParseShard(flag)
		if err != nil {
			return Shard{}, err
		}
		if shards > 0 && shards != s.Count {
			return Shard{}, fmt.Errorf("--shard %s and --shards %d disagree", flag, shards)
		}
		return s, nil
	}
	env := func(name string) (int, bool, error) {
		v := strings.TrimSpace(getenv(name))
		if v == "" {
			return 0, false, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil {
			return 0, true, fmt.Errorf("environment variable %s=%q is not a whole number", name, v)
		}
		return n, true, nil
	}
	if id, ok, err := env("SLURM_ARRAY_TASK_ID"); err != nil {
		return Shard{}, err
	} else if ok {
		min, haveMin, err := env("SLURM_ARRAY_TASK_MIN")
		if err != nil {
			return Shard{}, err
		}
		max, haveMax, err := env("SLURM_ARRAY_TASK_MAX")
		if err != nil {
			return Shard{}, err
		}
		count, haveCount, err := env("SLURM_ARRAY_TASK_COUNT")
		if err != nil {
			return Shard{}, err
		}
		step, haveStep, err := env("SLURM_ARRAY_TASK_STEP")
		if err != nil {
			return Shard{}, err
		}
		if !haveStep || step < 1 {
			step = 1
		}
		var s Shard
		switch {
		case haveMin && haveMax:
			if (id-min)%step != 0 {
				return Shard{}, fmt.Errorf("Slurm array task %d is not on the array's step %d from %d", id, step, min)
			}
			s = Shard{Index: (id - min) / step, Count: (max-min)/step + 1}
		case haveCount:
			if step != 1 {
				return Shard{}, fmt.Errorf("Slurm array with step %d: set SLURM_ARRAY_TASK_MIN and _MAX (Slurm sets them) or use --shard", step)
			}
			s = Shard{Index: id - min, Count: count}
		default:
			return Shard{}, fmt.Errorf("SLURM_ARRAY_TASK_ID is set but neither SLURM_ARRAY_TASK_MIN/MAX nor SLURM_ARRAY_TASK_COUNT; use --shard I/N")
		}
		if s.Count < 1 || s.Index < 0 || s.Index >= s.Count {
			return Shard{}, fmt.Errorf("Slurm array variables give shard %d of %d, which is out of range", s.Index, s.Count)
		}
		if shards > 0 && shards != s.Count {
			return Shard{}, fmt.Errorf("--shards %d disagrees with the Slurm array's %d tasks", shards, s.Count)
		}
		s.Source = "Slurm array"
		return s, nil
	}
	if idx, ok, err := env("JOB_COMPLETION_INDEX"); err != nil {
		return Shard{}, err
	} else if ok {
		if shards < 1 {
			return Shard{}, fmt.Errorf("JOB_COMPLETION_INDEX is set (Kubernetes Indexed Job): give the job's completions as --shards N")
		}
		if idx < 0 || idx >= shards {
			return Shard{}, fmt.Errorf("JOB_COMPLETION_INDEX=%d is out of range for --shards %d", idx, shards)
		}
		return Shard{Index: idx, Count: shards, Source: "Kubernetes indexed job"}, nil
	}
	if shards > 1 {
		return Shard{}, fmt.Errorf("--shards %d needs JOB_COMPLETION_INDEX or Slurm array variables; use --shard I/N otherwise", shards)
	}
	return Shard{Index: 0, Count: 1}, nil
}
