package main

import (
	"fmt"
	"io"

	"github.com/ramify-app/ramify/ui"
)

// printVersion prints the version from FyneApp.toml, the same line the About
// dialog shows.
func printVersion(stdout io.Writer) int {
	m, err := ui.Metadata()
	if err != nil {
		fmt.Fprintln(stdout, "ramify: version unknown:", err)
		return exitInvalid
	}
	fmt.Fprintln(stdout, ui.VersionLine(m))
	return exitOK
}
