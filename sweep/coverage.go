package sweep

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"sort"
	"strconv"
	"strings"

	"plumb/internal/parquetio"
)

// MetaCovers is the key-value metadata key of every score table naming the
// runs it was computed from: "COUNT:HASH", where HASH is the first 16 hex
// digits of the SHA-256 of the sorted lines "RUN_ID SHA256(record)" (the
// record's JSON without its seconds)
// of every finished run (done or failed) the scoring read. A run redone,
// added or lost since changes it, so readers can tell scores that no
// longer describe the study's finished runs.
const MetaCovers = "plumb.covers"

// Coverage identifies a set of finished runs by their records.
type Coverage struct {
	// Runs is the number of finished runs; Hash identifies them.
	Runs int
	Hash string
}

func (c Coverage) String() string { return strconv.Itoa(c.Runs) + ":" + c.Hash }

// parseCoverage reads a MetaCovers value.
func parseCoverage(v string) (Coverage, bool) {
	a, b, ok := strings.Cut(v, ":")
	n, err := strconv.Atoi(a)
	if !ok || err != nil || n < 0 || b == "" {
		return Coverage{}, false
	}
	return Coverage{Runs: n, Hash: b}, true
}

// coverageOf identifies the runs of the plan whose record is valid.
func coverageOf(dir string, info *Info, runs []*Run) Coverage {
	var lines []string
	for _, r := range runs {
		rec, err := readRecord(dir, info, r)
		if err != nil {
			continue
		}
		// The record without its timing, so that the same runs give the
		// same value whatever the machine's speed.
		rec.Seconds = 0
		b, err := json.Marshal(rec)
		if err != nil {
			continue
		}
		h := sha256.Sum256(b)
		lines = append(lines, r.ID+" "+hex.EncodeToString(h[:]))
	}
	sort.Strings(lines)
	h := sha256.Sum256([]byte(strings.Join(lines, "\n")))
	return Coverage{Runs: len(lines), Hash: hex.EncodeToString(h[:8])}
}

// coverageProblem compares the coverage recorded in the score tables with
// the study's finished runs now; it returns "" when they match.
func coverageProblem(recorded string, now Coverage) string {
	c, ok := parseCoverage(recorded)
	if !ok {
		return ""
	}
	switch {
	case c == now:
		return ""
	case c.Runs != now.Runs:
		return fmt.Sprintf("scores cover %d of %d finished runs", c.Runs, now.Runs)
	default:
		return fmt.Sprintf("scores cover %d runs, but finished runs were redone since", c.Runs)
	}
}

// ScoresCurrent reports whether the study in dir has score tables that
// form one scoring at k of exactly its finished runs now; a sweep rescores
// when they do not.
func ScoresCurrent(dir string, k int) bool {
	info, err := ReadInfo(dir)
	if err != nil {
		return false
	}
	sk, present, problem := checkScoreTables(dir, info)
	if !present || problem != "" || sk != k {
		return false
	}
	m, _, err := parquetio.ReadMeta(scoresPath(dir, ScoreSettingsFile))
	if err != nil {
		return false
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return false
	}
	c, ok := parseCoverage(m[MetaCovers])
	return ok && c == coverageOf(dir, info, runs)
}

// coversProblem checks the MetaCovers values of the score tables (one per
// table, in scoreTables order): they must agree with each other and with
// the study's finished runs now. Tables without the key (written before
// it existed) are not judged.
func coversProblem(dir string, info *Info, covers []string) string {
	for _, c := range covers[1:] {
		if c != covers[0] {
			return "the score tables cover different runs, as an interrupted score leaves them"
		}
	}
	if covers[0] == "" {
		return ""
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return ""
	}
	return coverageProblem(covers[0], coverageOf(dir, info, runs))
}
