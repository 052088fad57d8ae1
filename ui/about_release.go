//go:build release

package ui

// releaseBuild is true in binaries built with -tags release, as `make package` does.
const releaseBuild = true
