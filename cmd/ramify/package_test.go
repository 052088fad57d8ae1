//go:build packaging

// The packaging test runs `make package` (minutes on a cold build cache), so it
// is built only with -tags packaging: `make package-test`, called by `make test`.
package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// fyneTool finds the Fyne packaging tool where `go install` puts it, or on PATH.
func fyneTool() string {
	if p := os.Getenv("FYNE"); p != "" {
		return p
	}
	gobin, _ := exec.Command("go", "env", "GOBIN").Output()
	dir := strings.TrimSpace(string(gobin))
	if dir == "" {
		gopath, _ := exec.Command("go", "env", "GOPATH").Output()
		dir = filepath.Join(strings.TrimSpace(string(gopath)), "bin")
	}
	if p := filepath.Join(dir, "fyne"); fileExists(p) {
		return p
	}
	p, _ := exec.LookPath("fyne")
	return p
}

func fileExists(p string) bool {
	info, err := os.Stat(p)
	return err == nil && !info.IsDir()
}

func TestPackageArchive(t *testing.T) {
	fyne := fyneTool()
	if fyne == "" {
		t.Skip("Fyne packaging tool not installed; skipping the package test " +
			"(install it with: go install fyne.io/tools/cmd/fyne@v1.7.4)")
	}
	for _, tool := range []string{"make", "tar", "xz"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("%s not found; skipping the package test", tool)
		}
	}
	root, err := filepath.Abs("../..")
	require.NoError(t, err)
	var doc struct {
		Details struct {
			ID, Name, Version string
			Build             int
		}
	}
	tomlPath := filepath.Join(root, "FyneApp.toml")
	before, err := os.ReadFile(tomlPath)
	require.NoError(t, err)
	_, err = toml.Decode(string(before), &doc)
	require.NoError(t, err)

	dist := t.TempDir()
	mk := exec.Command("make", "-f", ".ci/package.mk", "package", "FYNE="+fyne, "DIST="+dist)
	mk.Dir = root
	out, err := mk.CombinedOutput()
	require.NoError(t, err, "make package:\n%s", out)

	after, err := os.ReadFile(tomlPath)
	require.NoError(t, err)
	assert.Equal(t, string(before), string(after), "make package must leave FyneApp.toml as committed")

	archive := filepath.Join(dist, doc.Details.Name+".tar.xz")
	list, err := exec.Command("tar", "-tf", archive).Output()
	require.NoError(t, err, "tar -tf %s", archive)
	entries := strings.Split(strings.TrimSpace(string(list)), "\n")
	find := func(suffix string) string {
		for _, e := range entries {
			if strings.HasSuffix(e, suffix) {
				return e
			}
		}
		return ""
	}
	want := []struct{ what, suffix string }{
		{"binary", "/bin/ramify"},
		{"icon", "/share/pixmaps/" + doc.Details.ID + ".png"},
		{"desktop entry", "/share/applications/" + doc.Details.ID + ".desktop"},
	}
	for _, w := range want {
		assert.NotEmpty(t, find(w.suffix), "%s (*%s) not in %s:\n%s", w.what, w.suffix, archive, list)
	}
	if t.Failed() {
		return
	}

	// Unpack and check what a user gets: the binary's version, the entry, the icon.
	unpacked := t.TempDir()
	require.NoError(t, exec.Command("tar", "-xf", archive, "-C", unpacked).Run())
	bin := filepath.Join(unpacked, find("/bin/ramify"))
	version := exec.Command(bin, "--version")
	version.Env = append(os.Environ(), "LANG=en_US.UTF-8")
	var stdout bytes.Buffer
	version.Stdout = &stdout
	require.NoError(t, version.Run())
	assert.Equal(t, doc.Details.Name+" "+doc.Details.Version+" (build "+strconv.Itoa(doc.Details.Build)+")\n", stdout.String())

	desktop, err := os.ReadFile(filepath.Join(unpacked, find(".desktop")))
	require.NoError(t, err)
	for _, line := range []string{"Name=" + doc.Details.Name, "Exec=ramify", "Icon=" + doc.Details.ID, "Type=Application"} {
		assert.Contains(t, strings.Split(string(desktop), "\n"), line)
	}
	icon, err := os.ReadFile(filepath.Join(unpacked, find(".png")))
	require.NoError(t, err)
	committed, err := os.ReadFile(filepath.Join(root, "assets", "icon.png"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(committed, icon), "packaged icon differs from assets/icon.png")
}
