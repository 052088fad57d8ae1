// Command ramify opens the Ramify window, or runs a headless subcommand.
//
//	ramify [FILE]                 open the editor (on a demo project when no FILE)
//	ramify SUBCOMMAND [flags] FILE
//
// Exit codes: 0 success, 1 invalid project or failed work, 2 usage error.
package main

import (
	"fmt"
	"io"
	"os"
	"sort"
	"strings"
)

// subcommand is one headless verb. Each lives in its own file and registers itself
// in init, so adding a verb touches no shared code.
type subcommand struct {
	summary string
	run     func(args []string, stdout, stderr io.Writer) int
}

var subcommands = map[string]subcommand{}

func register(name, summary string, run func(args []string, stdout, stderr io.Writer) int) {
	subcommands[name] = subcommand{summary, run}
}

const (
	exitOK      = 0
	exitInvalid = 1
	exitUsage   = 2
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) int {
	if len(args) > 0 {
		switch args[0] {
		case "-h", "--help", "help":
			usage(stdout)
			return exitOK
		}
		if sc, ok := subcommands[args[0]]; ok {
			return sc.run(args[1:], stdout, stderr)
		}
		if strings.HasPrefix(args[0], "-") && args[0] != "--version" {
			fmt.Fprintf(stderr, "ramify: unknown flag %s\n", args[0])
			usage(stderr)
			return exitUsage
		}
	}
	if len(args) > 0 && args[0] == "--version" {
		return printVersion(stdout)
	}
	if len(args) > 1 {
		fmt.Fprintf(stderr, "ramify: unknown subcommand %q\n", args[0])
		usage(stderr)
		return exitUsage
	}
	return openWindow(args, stderr)
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "usage: ramify [FILE]            open the editor")
	fmt.Fprintln(w, "       ramify --version")
	fmt.Fprintln(w, "       ramify SUBCOMMAND [flags] FILE")
	fmt.Fprintln(w, "subcommands:")
	names := make([]string, 0, len(subcommands))
	for n := range subcommands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-10s %s\n", n, subcommands[n].summary)
	}
}
