package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"

	"gonum.org/v1/plot"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
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

// loadValid loads and evaluates a file and requires it to have no problems; on
// failure it prints the message or the problems and returns the exit code to use.
func loadValid(path string, stderr io.Writer) (*engine.Project, *engine.Result, int) {
	p, r, code := loadProject(path, stderr)
	if code == exitOK {
		code = requireValid(path, r, stderr)
	}
	return p, r, code
}

// failOn prints err as "cmd: err" and returns exitInvalid; with no error it
// returns exitOK.
func failOn(cmd string, err error, stderr io.Writer) int {
	if err != nil {
		fmt.Fprintf(stderr, "%s: %s\n", cmd, err)
		return exitInvalid
	}
	return exitOK
}

// writeJSON prints v on stdout as indented JSON.
func writeJSON(cmd string, stdout, stderr io.Writer, v any) int {
	enc := json.NewEncoder(stdout)
	enc.SetIndent("", "  ")
	return failOn(cmd, enc.Encode(v), stderr)
}

// sensOutputs are the output flags of the sensitivity subcommands: --json,
// --csv and -o for the chart.
type sensOutputs struct {
	asJSON, asCSV *bool
	chart         *string
}

// sensOutputFlags adds --json, --csv and -o to fs with the given help texts.
func sensOutputFlags(fs *flag.FlagSet, jsonHelp, csvHelp, chartHelp string) *sensOutputs {
	return &sensOutputs{
		asJSON: fs.Bool("json", false, jsonHelp),
		asCSV:  fs.Bool("csv", false, csvHelp),
		chart:  fs.String("o", "", chartHelp),
	}
}

// check refuses --json together with --csv.
func (o *sensOutputs) check(cmd string, stderr io.Writer) int {
	if *o.asJSON && *o.asCSV {
		fmt.Fprintf(stderr, "%s: choose one of --json and --csv\n", cmd)
		return exitUsage
	}
	return exitOK
}

// sensResult is what every sensitivity result offers its outputs.
type sensResult interface {
	Chart() (*plot.Plot, error)
	WriteCSV(w io.Writer) error
}

// write puts a result where the flags ask: the chart to the -o file when one is
// named, then JSON (doc), CSV or the text report (text) on stdout.
func (o *sensOutputs) write(cmd string, res sensResult, doc func() any, text func(io.Writer), stdout, stderr io.Writer) int {
	if *o.chart != "" {
		pl, err := res.Chart()
		if err == nil {
			err = analysis.SaveSensitivityChart(pl, *o.chart)
		}
		if err != nil {
			fmt.Fprintf(stderr, "%s: chart: %s\n", cmd, err)
			return exitInvalid
		}
	}
	switch {
	case *o.asJSON:
		return writeJSON(cmd, stdout, stderr, doc())
	case *o.asCSV:
		return failOn(cmd, res.WriteCSV(stdout), stderr)
	}
	text(stdout)
	return exitOK
}

func oneOf(value string, allowed ...string) bool {
	for _, a := range allowed {
		if strings.EqualFold(value, a) {
			return true
		}
	}
	return false
}
