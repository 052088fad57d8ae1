package main

import (
	"fmt"
	"io"
)

// openWindow is replaced by the editor; until then the binary is headless only.
func openWindow(args []string, stderr io.Writer) int {
	fmt.Fprintln(stderr, "ramify: the editor window is not built yet; use a subcommand")
	return exitUsage
}
