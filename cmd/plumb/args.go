package main

import (
	"fmt"
	"strings"

	"github.com/urfave/cli/v2"
)

// The command-line library stops reading flags at the first positional
// argument, so "plumb report STUDY --out DIR" would see three arguments.
// run calls flagsFirst before the library parses anything: every command
// then takes its flags before, between or after its positional arguments.

// flagsFirst returns args (program name first) with the flags of the named
// command, and their values, moved before its positional arguments. The
// order of the flags among themselves and of the positional arguments among
// themselves is kept. A flag that takes a value takes the next argument
// unless written --name=value; boolean flags never take the next argument.
// Everything after "--" stays positional and in place. Unknown flags are
// moved too, so the library reports them. Arguments of an unknown command
// are returned unchanged.
func flagsFirst(args []string, cmds []*cli.Command) []string {
	if len(args) < 2 {
		return args
	}
	cmd := findCommand(cmds, args[1])
	if cmd == nil {
		return args
	}
	var flags, pos, rest []string
	dashdash := false
	in := args[2:]
	for i := 0; i < len(in); i++ {
		a := in[i]
		if a == "--" {
			dashdash = true
			rest = in[i+1:]
			break
		}
		if !strings.HasPrefix(a, "-") || a == "-" {
			pos = append(pos, a)
			continue
		}
		flags = append(flags, a)
		name, _, hasVal := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if hasVal || !takesValue(cmd, name) {
			continue
		}
		if i+1 < len(in) {
			i++
			flags = append(flags, in[i])
		}
	}
	out := append([]string{args[0], args[1]}, flags...)
	if dashdash || startsWithDash(pos) {
		out = append(out, "--")
	}
	out = append(out, pos...)
	return append(out, rest...)
}

// helpArgs rewrites "plumb help" and "plumb help COMMAND" as the --help
// flag, which the library shows without a help command.
func helpArgs(args []string) []string {
	if len(args) < 2 || (args[1] != "help" && args[1] != "h") {
		return args
	}
	if len(args) == 2 {
		return []string{args[0], "--help"}
	}
	return append([]string{args[0], args[2], "--help"}, args[3:]...)
}

func startsWithDash(pos []string) bool {
	for _, p := range pos {
		if strings.HasPrefix(p, "-") && p != "-" {
			return true
		}
	}
	return false
}

// takesValue reports whether the command's flag name (without dashes)
// reads the next argument as its value. Help and unknown flags do not.
func takesValue(cmd *cli.Command, name string) bool {
	for _, f := range cmd.Flags {
		for _, n := range f.Names() {
			if n != name {
				continue
			}
			if bf, ok := f.(interface{ TakesValue() bool }); ok {
				return bf.TakesValue()
			}
			return true
		}
	}
	return false
}

// findCommand returns the command called name (or one of its aliases), or
// nil.
func findCommand(cmds []*cli.Command, name string) *cli.Command {
	for _, c := range cmds {
		if c.HasName(name) {
			return c
		}
	}
	return nil
}

// unknownCommand returns the usage error for a first argument that names no
// command, with the nearest command names when they are close; nil when
// args name a command, a help topic or only flags.
func unknownCommand(args []string, cmds []*cli.Command) error {
	if len(args) < 2 {
		return nil
	}
	name := args[1]
	if (name == "help" || name == "h") && len(args) > 2 {
		name = args[2] // plumb help COMMAND
	}
	if strings.HasPrefix(name, "-") || name == "help" || name == "h" || findCommand(cmds, name) != nil {
		return nil
	}
	var names []string
	for _, c := range cmds {
		names = append(names, c.Name)
	}
	msg := fmt.Sprintf("unknown command %q", name)
	if near := nearest(name, names); len(near) > 0 {
		msg += fmt.Sprintf("; did you mean %s?", strings.Join(quoteAll(near), " or "))
	}
	return &exitError{code: 2, err: fmt.Errorf("%s (commands: %s)", msg, strings.Join(names, ", "))}
}

func quoteAll(s []string) []string {
	q := make([]string, len(s))
	for i, v := range s {
		q[i] = fmt.Sprintf("%q", v)
	}
	return q
}

// nearest returns the names at the smallest edit distance from s, when that
// distance is at most a third of the longer word's length (at least 1),
// or a name s is a prefix of.
func nearest(s string, names []string) []string {
	best, out := -1, []string(nil)
	for _, n := range names {
		d := editDistance(s, n)
		if strings.HasPrefix(n, s) && len(s) >= 2 {
			d = min(d, 1)
		}
		limit := max(1, max(len([]rune(s)), len([]rune(n)))/3)
		if d > limit {
			continue
		}
		switch {
		case best < 0 || d < best:
			best, out = d, []string{n}
		case d == best:
			out = append(out, n)
		}
	}
	return out
}

// editDistance is the Levenshtein distance between a and b (insertions,
// deletions and substitutions of runes, each costing 1).
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			sub := prev[j-1]
			if ra[i-1] != rb[j-1] {
				sub++
			}
			cur[j] = min(sub, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
