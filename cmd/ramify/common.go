package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"

	"github.com/ramify-app/ramify/engine"
)

// newFlags makes a flag set that reports usage errors to stderr and returns them
// instead of exiting, so every subcommand can map them to exit code 2.
func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("ramify "+name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	return fs
}

// parseArgs parses flags placed before or after the file argument, and returns
// the single positional argument.
func parseArgs(fs *flag.FlagSet, args []string, stderr io.Writer) (string, bool) {
	var positional []string
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				return "", false
			}
			return "", false
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		positional = append(positional, args[0])
		args = args[1:]
	}
	if len(positional) != 1 {
		fmt.Fprintf(stderr, "%s: expected one project FILE, got %d arguments\n", fs.Name(), len(positional))
		fs.Usage()
		return "", false
	}
	return positional[0], true
}

// loadProject loads and evaluates a file; on failure it prints the message and
// returns the exit code to use.
func loadProject(path string, stderr io.Writer) (*engine.Project, *engine.Result, int) {
	p, err := engine.Load(path)
	if err != nil {
		fmt.Fprintln(stderr, "ramify:", err)
		return nil, nil, exitInvalid
	}
	return p, engine.Evaluate(p), exitOK
}

// requireValid prints every problem and returns exitInvalid when there is any.
func requireValid(path string, r *engine.Result, stderr io.Writer) int {
	if r.Valid() {
		return exitOK
	}
	fmt.Fprintf(stderr, "ramify: %s has %d problem(s):\n", path, len(r.Problems))
	for _, pr := range r.Problems {
		fmt.Fprintln(stderr, "  "+pr.Msg)
	}
	return exitInvalid
}

func oneOf(value string, allowed ...string) bool {
	for _, a := range allowed {
		if strings.EqualFold(value, a) {
			return true
		}
	}
	return false
}
