// Command plumb runs t-SNE parameter sweeps and stability studies.
//
// Each subcommand lives in a file of its own and registers itself with
// register; main only builds the app and prints errors.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"
)

// version is the tool version written into every study file.
var version = "0.2.0-dev"

// commands holds every subcommand; files add theirs in init with register.
var commands []*cli.Command

func register(c *cli.Command) { commands = append(commands, c) }

// exitError carries an exit code other than 1 (for example 2 for usage
// errors in plumb check) through to main.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// hinter is implemented by errors that can suggest what to do next.
type hinter interface{ Hint() string }

func newApp(stdout, stderr io.Writer) *cli.App {
	sort.Slice(commands, func(i, j int) bool { return commands[i].Name < commands[j].Name })
	return &cli.App{
		Name:                 "plumb",
		Usage:                "t-SNE parameter sweeps and stability studies",
		Version:              version,
		Commands:             commands,
		Writer:               stdout,
		ErrWriter:            stderr,
		EnableBashCompletion: false,
		HideHelpCommand:      true,
		// Errors are printed once, by run.
		ExitErrHandler: func(*cli.Context, error) {},
	}
}

// run executes the app and returns the process exit code.
func run(args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	setCmdLine(args)
	err := unknownCommand(args, commands)
	if err == nil {
		err = app.Run(flagsFirst(helpArgs(args), commands))
	}
	if err == nil {
		return 0
	}
	code := 1
	var ee *exitError
	if errors.As(err, &ee) {
		code = ee.code
	}
	var ce cli.ExitCoder
	if errors.As(err, &ce) && ce.ExitCode() != 0 {
		code = ce.ExitCode()
	}
	msg := strings.TrimSuffix(err.Error(), ".")
	if msg != "" {
		fmt.Fprintf(stderr, "plumb: error: %s\n", msg)
	}
	var h hinter
	if errors.As(err, &h) && h.Hint() != "" {
		fmt.Fprintf(stderr, "plumb: hint: %s\n", h.Hint())
	}
	return code
}

func main() {
	watchSignals()
	os.Exit(run(os.Args, os.Stdout, os.Stderr))
}
