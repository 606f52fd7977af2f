package sweep

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"
)

// A study has one writer at a time. Writers hold an advisory lock (flock(2))
// on STUDY/.plumb.lock for the life of the process; the kernel drops it when
// the process ends, however it ends, so a SIGKILL never leaves a stale lock.
//
//   - An exclusive lock is taken by everything that writes shared files or
//     removes files: an unsharded sweep, a sweep with --force, Score, the
//     report. Its holder writes "pid N" and its command line into the lock
//     file, so that a refused writer can say who holds the study.
//   - The shards of one plan share the study: each takes a shared lock on
//     .plumb.lock plus an exclusive lock on its own .plumb.lock.shard-I-of-N
//     (holding its pid and command), so the same shard cannot run twice and
//     two splits of different N cannot run at once. Shards set the study up
//     (check or write study.json) one at a time under .plumb.lock.setup;
//     a shard whose plan or input differs from the study's is refused there.
//     A shard that finds every run finished converts its lock to an
//     exclusive one to rebuild runs.parquet and score; if another process
//     still holds the study, it leaves that to the last one or to
//     `plumb score`.
//   - Readers (show, check) take the shared lock only while they read the
//     files, waiting briefly for an exclusive holder (ReadLock).
//
// A second writer is refused at once with a *BusyError.
const (
	LockFile        = ".plumb.lock"
	setupLockFile   = ".plumb.lock.setup"
	shardLockPrefix = ".plumb.lock.shard-"
)

// lockWait is how long a writer waits for the lock before it is refused:
// long enough for a reader's brief shared lock, short enough to count as
// "at once".
var lockWait = 300 * time.Millisecond

// BusyError reports a study held by another process.
type BusyError struct {
	Dir string
	// Holder names the holding process ("pid 123 (plumb score STUDY)").
	Holder string
}

func (e *BusyError) Error() string {
	return fmt.Sprintf("%s is in use by %s: a study has one writer at a time", e.Dir, e.Holder)
}

// Hint says what to do.
func (e *BusyError) Hint() string {
	return "wait until it has finished, or stop it (shards of one plan may run together: give each its --shard I/N)"
}

// Lock is a study lock held by this process (see LockStudy).
type Lock struct {
	dir       string
	who       string
	f         *os.File
	exclusive bool
	shard     *os.File
	shardSpec Shard
}

// Exclusive reports whether the lock is held exclusively.
func (l *Lock) Exclusive() bool { return l != nil && l.f != nil && l.exclusive }

// Dir returns the study directory the lock is for.
func (l *Lock) Dir() string { return l.dir }

func flock(f *os.File, how int, wait time.Duration) bool {
	deadline := time.Now().Add(wait)
	for {
		err := syscall.Flock(int(f.Fd()), how|syscall.LOCK_NB)
		if err == nil {
			return true
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) && !errors.Is(err, syscall.EINTR) {
			return false
		}
		if time.Now().After(deadline) {
			return false
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// checkStudyDir refuses a path that cannot be a study: a regular file, or
// a non-empty directory without study.json (plumb's hidden lock files
// aside). A directory is a study only if its study.json says so.
func checkStudyDir(dir string) error {
	st, err := os.Stat(dir)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("create study directory: %w", err)
	}
	if !st.IsDir() {
		return fmt.Errorf("%s exists and is not a directory", dir)
	}
	if _, err := os.Lstat(filepath.Join(dir, StudyFile)); err == nil {
		return nil
	}
	ents, err := os.ReadDir(dir)
	if err != nil {
		return fmt.Errorf("read study directory: %w", err)
	}
	for _, e := range ents {
		// plumb's lock files, and the temporary file of a study.json
		// another process is writing now (it holds the lock; we will be
		// told so).
		if !strings.HasPrefix(e.Name(), LockFile) && !strings.HasPrefix(e.Name(), "."+StudyFile+".tmp-") {
			return fmt.Errorf("%s is not empty and holds no %s (found %s); refusing to write a study into it", dir, StudyFile, e.Name())
		}
	}
	return nil
}

// LockStudy takes the write lock of the study in dir for this process,
// creating dir if needed (a path that is a file, or a non-empty directory
// that holds no study.json, is refused first, and nothing is created). With
// exclusive false and a real shard (shard.Count > 1) the lock is shared
// with the other shards of the plan; otherwise it is exclusive. who is the
// command line recorded for others to see. A study held by another writer
// gives a *BusyError after at most lockWait (0.3 s).
func LockStudy(dir string, shard Shard, exclusive bool, who string) (*Lock, error) {
	if err := checkStudyDir(dir); err != nil {
		return nil, err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("create study directory: %w", err)
	}
	f, err := os.OpenFile(filepath.Join(dir, LockFile), os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("lock study: %w", err)
	}
	l := &Lock{dir: dir, who: who, f: f, exclusive: exclusive || shard.Whole()}
	if l.exclusive {
		if !flock(f, syscall.LOCK_EX, lockWait) {
			f.Close()
			return nil, &BusyError{Dir: dir, Holder: holder(dir)}
		}
		l.record()
		l.removeShardFiles()
		return l, nil
	}
	if !flock(f, syscall.LOCK_SH, lockWait) {
		f.Close()
		return nil, &BusyError{Dir: dir, Holder: holder(dir)}
	}
	unlock, err := l.setup()
	if err != nil {
		f.Close()
		return nil, err
	}
	defer unlock()
	// Another split (another N) running now would share runs with this one.
	m, _ := filepath.Glob(filepath.Join(dir, shardLockPrefix+"*"))
	suffix := fmt.Sprintf("-of-%d", shard.Count)
	for _, p := range m {
		if strings.HasSuffix(p, suffix) {
			continue
		}
		if h, held := heldBy(p); held {
			f.Close()
			return nil, &BusyError{Dir: dir, Holder: h + " (a shard of another split)"}
		}
	}
	sf, err := os.OpenFile(filepath.Join(dir, fmt.Sprintf("%s%d-of-%d", shardLockPrefix, shard.Index, shard.Count)), os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("lock study: %w", err)
	}
	if !flock(sf, syscall.LOCK_EX, 0) {
		h := readHolder(sf.Name())
		sf.Close()
		f.Close()
		return nil, &BusyError{Dir: dir, Holder: h + " (the same shard)"}
	}
	l.shard, l.shardSpec = sf, shard
	writeHolder(sf, who)
	return l, nil
}

// setup takes the setup lock that serialises the shards' set-up of the
// study; the returned function releases it.
func (l *Lock) setup() (func(), error) {
	if l == nil || l.exclusive {
		return func() {}, nil
	}
	sf, err := os.OpenFile(filepath.Join(l.dir, setupLockFile), os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("lock study: %w", err)
	}
	if err := syscall.Flock(int(sf.Fd()), syscall.LOCK_EX); err != nil {
		sf.Close()
		return nil, fmt.Errorf("lock study: %w", err)
	}
	return func() { sf.Close() }, nil
}

// Upgrade converts a shared lock into an exclusive one, waiting up to wait
// for the other holders to let go. It reports whether the lock is now
// exclusive. flock(2) converts by releasing first, so after a failure the
// lock is no longer held at all: call Upgrade only when this process has
// nothing left to write but the shared tables.
func (l *Lock) Upgrade(wait time.Duration) bool {
	if l == nil || l.f == nil {
		return false
	}
	if l.exclusive {
		return true
	}
	if !flock(l.f, syscall.LOCK_EX, wait) {
		l.f.Close()
		l.f = nil
		return false
	}
	l.exclusive = true
	l.record()
	return true
}

// Release lets the lock go (the kernel does it anyway when the process
// ends).
func (l *Lock) Release() {
	if l == nil {
		return
	}
	if l.f != nil {
		if l.exclusive {
			l.f.Truncate(0)
		}
		l.f.Close()
		l.f = nil
	}
	if l.shard != nil {
		l.shard.Truncate(0)
		l.shard.Close()
		l.shard = nil
	}
}

// record writes this process into the lock file (exclusive holders).
func (l *Lock) record() { writeHolder(l.f, l.who) }

func writeHolder(f *os.File, who string) {
	f.Truncate(0)
	f.WriteAt([]byte("pid "+strconv.Itoa(os.Getpid())+"\n"+who+"\n"), 0)
}

// removeShardFiles removes the shards' lock files (and the setup lock),
// which no process can hold while this one holds the study exclusively.
func (l *Lock) removeShardFiles() {
	m, _ := filepath.Glob(filepath.Join(l.dir, shardLockPrefix+"*"))
	m = append(m, filepath.Join(l.dir, setupLockFile))
	for _, p := range m {
		os.Remove(p)
	}
}

// readHolder returns "pid N (COMMAND)" from a lock file, or "" if it
// records none.
func readHolder(path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		return ""
	}
	lines := strings.SplitN(strings.TrimSpace(string(b)), "\n", 2)
	if len(lines) < 1 || !strings.HasPrefix(lines[0], "pid ") {
		return ""
	}
	h := lines[0]
	if pid, err := strconv.Atoi(strings.TrimPrefix(h, "pid ")); err != nil || pid <= 0 ||
		errors.Is(syscall.Kill(pid, 0), syscall.ESRCH) {
		return "" // left by a process that has ended
	}
	if len(lines) == 2 && lines[1] != "" {
		cmd := lines[1]
		if len(cmd) > 200 {
			cmd = cmd[:200] + "…"
		}
		h += " (" + cmd + ")"
	}
	return h
}

// heldBy reports whether another process holds the lock file at path, and
// who.
func heldBy(path string) (string, bool) {
	f, err := os.Open(path)
	if err != nil {
		return "", false
	}
	defer f.Close()
	if flock(f, syscall.LOCK_EX, 0) {
		return "", false
	}
	h := readHolder(path)
	if h == "" {
		h = "another plumb process"
	}
	return h, true
}

// holder names the process that keeps the study from being locked: a
// shard, else the exclusive holder recorded in .plumb.lock, else a reader.
func holder(dir string) string {
	m, _ := filepath.Glob(filepath.Join(dir, shardLockPrefix+"*"))
	for _, p := range m {
		if h, held := heldBy(p); held {
			return h
		}
	}
	if h := readHolder(filepath.Join(dir, LockFile)); h != "" {
		return h
	}
	return "another plumb process (one reading it, such as show or check)"
}

// ReadLock lets a reader wait up to wait for a writer holding the study
// exclusively (Score writing its tables, an unsharded sweep). It returns a
// function that ends the read and, if the wait ran out, the writer still
// at work (the reader then reads the files as they are and should say so).
// A study without a lock file (never written by this version) or one the
// reader cannot open is read without waiting.
func ReadLock(dir string, wait time.Duration) (release func(), busy *BusyError) {
	f, err := os.Open(filepath.Join(dir, LockFile))
	if err != nil {
		return func() {}, nil
	}
	if flock(f, syscall.LOCK_SH, wait) {
		return func() { f.Close() }, nil
	}
	f.Close()
	return func() {}, &BusyError{Dir: dir, Holder: holder(dir)}
}
