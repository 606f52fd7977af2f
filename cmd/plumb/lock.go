package main

import (
	"fmt"
	"io"
	"strings"
	"time"

	"plumb/sweep"
)

// cmdLine is this process's command line, recorded in a study's lock file
// so that a refused writer can name the holder.
var cmdLine = "plumb"

func setCmdLine(args []string) {
	if len(args) > 0 {
		args = append([]string{"plumb"}, args[1:]...)
	}
	cmdLine = strings.Join(args, " ")
}

// readWait is how long a reader waits for a writer that holds a study
// exclusively before it reads the files as they are.
const readWait = 3 * time.Second

// readStudy holds a study's read lock while read runs (sweep.ReadLock). If
// a writer keeps the study past readWait, read runs anyway and a warning
// says that the files were read while being written.
func readStudy(stderr io.Writer, dir string, read func() error) error {
	release, busy := sweep.ReadLock(dir, readWait)
	defer release()
	if busy != nil {
		fmt.Fprintf(stderr, "plumb: warning: %s is being written by %s; read as it is now (run the command again when it has finished)\n", dir, busy.Holder)
	}
	return read()
}
