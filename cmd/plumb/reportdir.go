package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"

	"plumb/cmd/plumb/internal/report"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/sweep"
)

// reportMarker marks a directory plumb report made: the report writes only
// into a new (or empty) directory, which it marks, or into one that holds
// its marker, so it never overwrites an index.html or methods.md that
// someone else wrote. The marker is also the report's lock: two reports
// never write one directory at once.
const reportMarker = ".plumb-report"

// claimReportDir makes out the report's directory, or refuses it; the
// returned function releases it.
func claimReportDir(out, study string) (func(), error) {
	st, err := os.Stat(out)
	switch {
	case errors.Is(err, os.ErrNotExist):
		if err := os.MkdirAll(out, 0o755); err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
	case err != nil:
		return nil, fmt.Errorf("report: %w", err)
	case !st.IsDir():
		return nil, fmt.Errorf("report: %s exists and is not a directory", out)
	}
	marker := filepath.Join(out, reportMarker)
	if _, err := os.Lstat(marker); err != nil {
		ents, err := os.ReadDir(out)
		if err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
		// A report written into its study's report/ before the marker
		// existed holds only these.
		ownOld := filepath.Clean(out) == filepath.Clean(filepath.Join(study, "report"))
		for _, e := range ents {
			name := e.Name()
			if ownOld && (name == "index.html" || name == "methods.md" || name == "figures" || strings.HasPrefix(name, ".")) {
				continue
			}
			return nil, hintError{err: fmt.Errorf("report: %s holds files plumb did not write (found %s); refusing to write a report into it", out, name),
				hint: "choose a new --out directory (plumb report writes only into a directory it made)"}
		}
	}
	f, err := os.OpenFile(marker, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		f.Close()
		return nil, fmt.Errorf("report: %s is being written by another plumb report", out)
	}
	f.Truncate(0)
	f.WriteAt([]byte("This directory was made by plumb report, which writes only into directories holding this file.\n"), 0)
	return func() { f.Close() }, nil
}

// cleanReportTemps removes the temporary files an interrupted report left
// in out and out/figures (atomicfile names them ".NAME.tmp-*"). The caller
// holds the directory (claimReportDir), so none is another report's.
func cleanReportTemps(out string) {
	for _, d := range []string{out, filepath.Join(out, "figures")} {
		m, _ := filepath.Glob(filepath.Join(d, ".*.tmp-*"))
		for _, f := range m {
			if fi, err := os.Lstat(f); err == nil && fi.Mode().IsRegular() {
				os.Remove(f)
			}
		}
	}
}

// within reports whether path is dir or lies under it.
func within(path, dir string) bool {
	p, err1 := filepath.Abs(path)
	d, err2 := filepath.Abs(dir)
	if err1 != nil || err2 != nil {
		return false
	}
	rel, err := filepath.Rel(d, p)
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}

// writeReport opens the study in dir and writes its report into out. A
// report inside the study (the default STUDY/report) writes into the study,
// so it takes the study's lock like every writer; elsewhere it only reads
// the study (readStudy).
func writeReport(stderr io.Writer, dir, out string, rule report.Rule) (*report.Output, error) {
	var st *studyview.View
	open := func() (err error) { st, err = studyview.Open(dir); return err }
	var err error
	if _, serr := os.Stat(filepath.Join(dir, sweep.StudyFile)); serr == nil && within(out, dir) {
		lock, lerr := sweep.LockStudy(dir, sweep.Shard{}, true, cmdLine)
		if lerr != nil {
			return nil, lerr
		}
		defer lock.Release()
		err = open()
	} else {
		err = readStudy(stderr, dir, open)
	}
	if err != nil {
		return nil, err
	}
	release, err := claimReportDir(out, dir)
	if err != nil {
		return nil, err
	}
	defer release()
	cleanReportTemps(out)
	return report.Write(st, out, report.Options{Rule: rule})
}
