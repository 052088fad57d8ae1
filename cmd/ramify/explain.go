package main

import (
	"fmt"
	"io"

	"github.com/ramify-app/ramify/engine"
)

func init() {
	register("explain", "show the arithmetic behind a node's value (--node ID, --json)", runExplain)
}

func runExplain(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("explain", stderr)
	id := fs.String("node", "", "id of the node to explain (default: the root)")
	asJSON := fs.Bool("json", false, "print the terms as JSON with exact decimal strings")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	p, r, code := loadProject(path, stderr)
	if code != exitOK {
		return code
	}
	n := p.Root
	if *id != "" {
		if n = p.FindNode(*id); n == nil {
			fmt.Fprintf(stderr, "ramify explain: %s has no node with the id %q\n", path, *id)
			return exitInvalid
		}
	}
	e, err := engine.Explain(r, n)
	if err != nil {
		fmt.Fprintf(stderr, "ramify explain: %s: %v\n", path, err)
		return exitInvalid
	}
	if *asJSON {
		return writeJSON(fs.Name(), stdout, stderr, e)
	}
	fmt.Fprint(stdout, e.Text())
	return exitOK
}
