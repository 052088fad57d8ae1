// Command genlicenses writes the licences of every module linked into Ramify's
// binaries as a Go file, so the About dialog shows them without anyone typing
// them by hand. It reads the module graph with `go list -deps` for each target
// system and the licence files from the module cache.
//
//	go run ./cmd/genlicenses -o ui/about_licences_gen.go -pkg ui
//
// It is run by `go generate ./ui`; a test fails when the committed file is stale.
package main

import (
	"bufio"
	"bytes"
	"flag"
	"fmt"
	"go/format"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
)

func main() {
	out := flag.String("o", "", "output Go file (default: standard output)")
	pkg := flag.String("pkg", "ui", "package name of the output file")
	root := flag.String("C", "", "module root (default: found from the working directory)")
	goos := flag.String("goos", "linux,windows,darwin", "comma-separated target systems whose dependencies are shipped")
	flag.Parse()
	patterns := flag.Args()
	if len(patterns) == 0 {
		patterns = []string{"./..."}
	}
	dir := *root
	if dir == "" {
		var err error
		if dir, err = moduleRoot(); err != nil {
			fail(err)
		}
	}
	mods, err := shippedModules(dir, strings.Split(*goos, ","), patterns)
	if err != nil {
		fail(err)
	}
	src, err := render(*pkg, mods)
	if err != nil {
		fail(err)
	}
	if *out == "" {
		os.Stdout.Write(src)
		return
	}
	if err := os.WriteFile(*out, src, 0o644); err != nil {
		fail(err)
	}
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "genlicenses:", err)
	os.Exit(1)
}

// module is one shipped dependency with its licence files, in file-name order.
type module struct {
	Path, Version string
	Dir           string
	pkgDirs       map[string]bool
	Files         []licenceFile
}

type licenceFile struct {
	Name string // relative to the module root, slash-separated
	Text string
}

// toolOnly lists packages of this module that are development tools, not shipped.
var toolOnly = regexp.MustCompile(`/cmd/genlicenses$`)

func moduleRoot() (string, error) {
	out, err := exec.Command("go", "env", "GOMOD").Output()
	if err != nil {
		return "", fmt.Errorf("go env GOMOD: %w", err)
	}
	gomod := strings.TrimSpace(string(out))
	if gomod == "" || gomod == os.DevNull {
		return "", fmt.Errorf("not inside a Go module")
	}
	return filepath.Dir(gomod), nil
}

// shippedModules lists the non-main modules that the given packages link on
// any of the target systems, with the standard library as module "go".
func shippedModules(root string, goosList, patterns []string) ([]*module, error) {
	mainPkgs, err := goList(root, "", []string{"-f", "{{.ImportPath}}"}, patterns)
	if err != nil {
		return nil, err
	}
	var shipped []string
	for _, p := range mainPkgs {
		if !toolOnly.MatchString(p) {
			shipped = append(shipped, p)
		}
	}
	mods := map[string]*module{}
	const tmpl = "{{if .Standard}}std{{else}}{{with .Module}}{{if not .Main}}{{.Path}}\t{{.Version}}\t{{.Dir}}{{end}}{{end}}{{end}}\t{{.Dir}}"
	for _, goos := range goosList {
		lines, err := goList(root, strings.TrimSpace(goos), []string{"-deps", "-f", tmpl}, shipped)
		if err != nil {
			return nil, err
		}
		for _, line := range lines {
			f := strings.Split(line, "\t")
			switch {
			case f[0] == "std":
				if mods["go"] == nil {
					goroot, err := exec.Command("go", "env", "GOROOT").Output()
					if err != nil {
						return nil, fmt.Errorf("go env GOROOT: %w", err)
					}
					mods["go"] = &module{Path: "go", Version: strings.TrimPrefix(goVersion(), "go"), Dir: strings.TrimSpace(string(goroot)), pkgDirs: map[string]bool{}}
				}
			case len(f) == 4 && f[0] != "":
				m := mods[f[0]]
				if m == nil {
					if f[2] == "" {
						return nil, fmt.Errorf("module %s@%s is not in the module cache: run `go mod download`", f[0], f[1])
					}
					m = &module{Path: f[0], Version: f[1], Dir: f[2], pkgDirs: map[string]bool{}}
					mods[f[0]] = m
				}
				m.pkgDirs[f[3]] = true
			}
		}
	}
	var list []*module
	for _, m := range mods {
		if err := m.readLicences(); err != nil {
			return nil, err
		}
		list = append(list, m)
	}
	sort.Slice(list, func(i, j int) bool { return list[i].Path < list[j].Path })
	return list, nil
}

func goVersion() string {
	out, err := exec.Command("go", "env", "GOVERSION").Output()
	if err != nil {
		return ""
	}
	return strings.TrimSpace(string(out))
}

func goList(root, goos string, flags, patterns []string) ([]string, error) {
	args := append(append([]string{"list"}, flags...), patterns...)
	cmd := exec.Command("go", args...)
	cmd.Dir = root
	cmd.Env = os.Environ()
	if goos != "" {
		// cgo on: the GUI's drivers are cgo packages on every desktop system.
		cmd.Env = append(cmd.Env, "GOOS="+goos, "CGO_ENABLED=1")
	}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		return nil, fmt.Errorf("go %s (GOOS=%s): %v\n%s", strings.Join(args, " "), goos, err, stderr.String())
	}
	var lines []string
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		if l := sc.Text(); l != "" {
			lines = append(lines, l)
		}
	}
	return lines, sc.Err()
}

var licenceName = regexp.MustCompile(`(?i)^(licen[cs]e|copying|unlicense)([-_.][\w.-]*)?$`)

func isLicenceFile(name string) bool {
	return licenceName.MatchString(name) && !strings.HasSuffix(name, ".go")
}

// readLicences collects licence files at the module root, in a root "licenses"
// folder, in the folder of a linked package, and in a data folder (no Go files)
// beside a linked package, such as bundled fonts. Test data is never included.
func (m *module) readLicences() error {
	if m.Path == "go" {
		text, err := os.ReadFile(filepath.Join(m.Dir, "LICENSE"))
		if err != nil {
			return fmt.Errorf("Go's licence: %w", err)
		}
		m.Files = []licenceFile{{"LICENSE", normalise(text)}}
		return nil
	}
	err := filepath.WalkDir(m.Dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if name := d.Name(); path != m.Dir && (name == "testdata" || name == "vendor" || strings.HasPrefix(name, ".") || strings.HasPrefix(name, "_")) {
				return filepath.SkipDir
			}
			return nil
		}
		dir := filepath.Dir(path)
		inLicences := filepath.Dir(dir) == m.Dir && strings.EqualFold(filepath.Base(dir), "licenses")
		if !inLicences && !isLicenceFile(d.Name()) {
			return nil
		}
		if !inLicences && dir != m.Dir && !m.pkgDirs[dir] && !(m.pkgDirs[filepath.Dir(dir)] && !hasGoFiles(dir)) {
			return nil
		}
		text, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(m.Dir, path)
		m.Files = append(m.Files, licenceFile{filepath.ToSlash(rel), normalise(text)})
		return nil
	})
	if err != nil {
		return fmt.Errorf("licences of %s@%s: %w", m.Path, m.Version, err)
	}
	if len(m.Files) == 0 {
		return fmt.Errorf("module %s@%s ships no licence file in %s", m.Path, m.Version, m.Dir)
	}
	sort.Slice(m.Files, func(i, j int) bool {
		// Root files first, then nested ones.
		di, dj := strings.Count(m.Files[i].Name, "/"), strings.Count(m.Files[j].Name, "/")
		if di != dj {
			return di < dj
		}
		return m.Files[i].Name < m.Files[j].Name
	})
	return nil
}

func hasGoFiles(dir string) bool {
	matches, _ := filepath.Glob(filepath.Join(dir, "*.go"))
	return len(matches) > 0
}

func normalise(b []byte) string {
	s := strings.ReplaceAll(string(b), "\r\n", "\n")
	return strings.TrimSpace(s) + "\n"
}

// classify names the licences found in a text with SPDX identifiers. The
// phrases are each licence's own fixed wording (SPDX licence list texts; the
// phrases are quoted from memory and checked against the files in the test).
func classify(text string) string {
	t := strings.Join(strings.Fields(text), " ")
	has := func(s string) bool { return strings.Contains(strings.ToLower(t), strings.ToLower(s)) }
	var ids []string
	add := func(id string) {
		for _, x := range ids {
			if x == id {
				return
			}
		}
		ids = append(ids, id)
	}
	if has("Apache License") && has("Version 2.0") {
		add("Apache-2.0")
	}
	if has("Mozilla Public License") && has("2.0") {
		add("MPL-2.0")
	}
	if has("SIL OPEN FONT LICENSE") {
		add("OFL-1.1")
	}
	if has("This is free and unencumbered software released into the public domain") || has("UNLICENSE") {
		add("Unlicense")
	}
	// The font licences reuse MIT's opening sentence.
	if has("Permission is hereby granted, free of charge") && !has("SIL OPEN FONT LICENSE") && !has("Bitstream Vera") {
		add("MIT")
	}
	if has("This software is provided 'as-is', without any express or implied warranty") && has("must not be misrepresented") {
		add("Zlib")
	}
	if has("Permission to use, copy, modify, and/or distribute this software for any purpose with or without fee") ||
		has("Permission to use, copy, modify, and distribute this software for any purpose with or without fee") {
		add("ISC")
	}
	if has("Redistribution and use in source and binary forms") {
		if has("Neither the name") || has("names of its contributors") || has("name of the copyright holder") {
			add("BSD-3-Clause")
		} else {
			add("BSD-2-Clause")
		}
	}
	if has("The FreeType Project LICENSE") || has("FreeType License") {
		add("FTL")
	}
	if has("GNU GENERAL PUBLIC LICENSE") || has("GNU General Public License") {
		add("GPL-2.0-or-later")
	}
	if has("Bitstream Vera") {
		add("Bitstream-Vera")
	}
	if has("Creative Commons Attribution 4.0") {
		add("CC-BY-4.0")
	}
	if len(ids) == 0 {
		return "see text"
	}
	if len(ids) > 1 && (has("your choice of") || has("dual-licensed") || has("dual licensed") || spdxOr.MatchString(t)) {
		return strings.Join(ids, " OR ")
	}
	return strings.Join(ids, ", ")
}

var spdxOr = regexp.MustCompile(`SPDX-License-Identifier: \S+ OR \S+`)

// moduleLicence joins the classifications of a module's files, dropping a
// file's licence when another file already offers it as one of a choice (a
// "FTL OR GPL" notice beside the full FTL text), and "see text" for a short
// pointer file when another file names a licence.
func moduleLicence(exprs []string) string {
	var out []string
	for i, e := range exprs {
		if e == "see text" && len(exprs) > 1 {
			continue
		}
		covered := false
		for j, other := range exprs {
			if j != i && strings.Contains(other, " OR ") && !strings.Contains(e, " OR ") {
				covered = true
				for _, id := range strings.Split(e, ", ") {
					if !contains(strings.Split(other, " OR "), id) {
						covered = false
					}
				}
			}
			if covered {
				break
			}
		}
		if !covered && !contains(out, e) {
			out = append(out, e)
		}
	}
	if len(out) == 0 {
		return "see text"
	}
	return strings.Join(out, "; ")
}

// render writes the Go source: distinct licence texts once, and per module its
// name, version, licence identifiers and the indexes of its texts.
func render(pkg string, mods []*module) ([]byte, error) {
	var texts []string
	index := map[string]int{}
	var b bytes.Buffer
	fmt.Fprintf(&b, "// Code generated by go run ./cmd/genlicenses; DO NOT EDIT.\n\npackage %s\n\n", pkg)
	b.WriteString("// shippedModules lists every module linked into Ramify with its licence files.\nvar shippedModules = []shippedModule{\n")
	for _, m := range mods {
		var exprs []string
		var names []string
		var refs []string
		for _, f := range m.Files {
			i, ok := index[f.Text]
			if !ok {
				i = len(texts)
				texts = append(texts, f.Text)
				index[f.Text] = i
			}
			refs = append(refs, strconv.Itoa(i))
			names = append(names, strconv.Quote(f.Name))
			exprs = append(exprs, classify(f.Text))
		}
		fmt.Fprintf(&b, "\t{Path: %q, Version: %q, Licence: %q, Files: []string{%s}, Texts: []int{%s}},\n",
			m.Path, m.Version, moduleLicence(exprs), strings.Join(names, ", "), strings.Join(refs, ", "))
	}
	b.WriteString("}\n\n// licenceTexts holds each distinct licence text once.\nvar licenceTexts = []string{\n")
	for _, t := range texts {
		fmt.Fprintf(&b, "\t%s,\n", quote(t))
	}
	b.WriteString("}\n")
	return format.Source(b.Bytes())
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// quote prefers a raw string, which keeps the generated file readable.
func quote(s string) string {
	if !strings.Contains(s, "`") && !strings.Contains(s, "\r") && !strings.ContainsRune(s, '\ufeff') && strconv.CanBackquote(strings.ReplaceAll(strings.ReplaceAll(s, "\n", ""), "\t", "")) {
		return "`" + s + "`"
	}
	return strconv.Quote(s)
}
