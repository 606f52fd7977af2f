// Package atomicfile writes files atomically: the bytes go to a temporary
// file in the destination directory, are flushed to stable storage with
// fsync, and the file is renamed over the destination, so a reader (or a
// process killed half-way) sees either the old file or the complete new
// one, never a mixture. Temporary files are named ".NAME.tmp-RANDOM", so a
// glob such as "layouts/*.parquet" never matches one; TempPattern names
// them for clean-up.
//
// References:
//   - POSIX rename(2): replacing a file within one file system is atomic.
package atomicfile

import (
	"os"
	"path/filepath"
)

// Write creates path atomically: fill is called with a temporary file
// in path's directory (named ".BASE.tmp-RANDOM"); if it succeeds the file
// is synced, closed and renamed to path and the directory is synced. On
// any error the temporary file is removed and path is left untouched.
func Write(path string, fill func(f *os.File) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	if err = fill(f); err != nil {
		return err
	}
	// os.CreateTemp makes the file 0600; give it 0644, the mode files
	// usually get, so a study on a shared file system is readable by others.
	if err = f.Chmod(0o644); err != nil {
		return err
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	if err = os.Rename(tmp, path); err != nil {
		return err
	}
	if d, derr := os.Open(dir); derr == nil {
		// Best effort: some file systems do not support syncing a directory.
		d.Sync()
		d.Close()
	}
	return nil
}

// WriteFile writes data to path atomically (see Write).
func WriteFile(path string, data []byte) error {
	return Write(path, func(f *os.File) error {
		_, err := f.Write(data)
		return err
	})
}

// TempPattern returns the glob matching the temporary files Write may
// leave behind for path when the process is killed mid-write.
func TempPattern(path string) string {
	dir, base := filepath.Split(path)
	return filepath.Join(dir, "."+base+".tmp-*")
}
