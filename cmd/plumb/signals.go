package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"sync/atomic"
	"syscall"
)

// Interrupts. SIGINT (Ctrl-C) and SIGTERM (what schedulers send first) end
// every command with exit status 130, one "interrupted" error line and a
// hint. Commands that can stop cleanly (sweep, score, embed, demo) take the
// signal through interruptContext and finish what they must; for the
// others, main's handler (watchSignals) prints the lines and exits at once
// (their files are written atomically, and leftover temporary files are
// removed by the next run of the command).

// ownSignals counts the commands in this process that handle the signals
// themselves; while it is positive, main's handler leaves them alone.
var ownSignals atomic.Int32

// interruptContext returns a context cancelled by SIGINT or SIGTERM, and
// its stop function.
func interruptContext() (context.Context, context.CancelFunc) {
	ownSignals.Add(1)
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	return ctx, func() {
		stop()
		ownSignals.Add(-1)
	}
}

// interrupted is the error of an interrupted command: exit status 130,
// the message and a hint.
func interrupted(hint, format string, a ...any) error {
	return &exitError{code: 130, err: hintError{err: fmt.Errorf("interrupted: "+format, a...), hint: hint}}
}

// watchSignals is main's handler for commands that do not take the
// signals themselves.
func watchSignals() {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	go func() {
		for range ch {
			if ownSignals.Load() > 0 {
				continue
			}
			fmt.Fprintln(os.Stderr, "\nplumb: error: interrupted: nothing was left half-written")
			fmt.Fprintln(os.Stderr, "plumb: hint: run the same command again")
			os.Exit(130)
		}
	}()
}
