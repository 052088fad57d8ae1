package engine

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
)

// FormatName and FormatVersion identify Ramify's project files.
const (
	FormatName    = "ramify"
	FormatVersion = 1
	// MaxNodes and MaxDepth bound what the loader accepts, so a hostile or broken
	// file gets a clear message instead of exhausting memory.
	MaxNodes = 2_000_000
	MaxDepth = 3_000
)

// LoadError names where in a file loading failed.
type LoadError struct {
	File string // may be empty
	Path string // JSON location: root.branches[1].to.kind
	Msg  string
}

func (e *LoadError) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		b.WriteString(": ")
	}
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Load reads a project file.
func Load(path string) (*Project, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, &LoadError{File: path, Msg: cleanOSError(err)}
	}
	return Parse(data, path)
}

func cleanOSError(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// Parse reads a project from JSON; name is used in messages (a file name or "clipboard").
func Parse(data []byte, name string) (*Project, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	var doc any
	if err := dec.Decode(&doc); err != nil {
		return nil, &LoadError{File: name, Msg: describeJSONError(data, err)}
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, &LoadError{File: name, Msg: "extra data after the project's closing brace"}
	}
	r := &reader{file: name, ids: map[string]bool{}}
	p := r.project(doc)
	if r.err != nil {
		return nil, r.err
	}
	r.assignIDs(p.Root)
	return p, nil
}

func describeJSONError(data []byte, err error) string {
	if strings.Contains(err.Error(), "exceeded max depth") {
		return fmt.Sprintf("the tree is nested too deeply (at most %d levels)", MaxDepth)
	}
	var se *json.SyntaxError
	if errors.As(err, &se) {
		line, col := lineCol(data, se.Offset)
		return fmt.Sprintf("not valid JSON at line %d, column %d: %s", line, col, se.Error())
	}
	if errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF) {
		return "the file ends too early (truncated JSON)"
	}
	return "not valid JSON: " + err.Error()
}

// lineCol turns a decoder offset (just past the offending byte) into a line and column.
func lineCol(data []byte, off int64) (int, int) {
	if off > 0 {
		off--
	}
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	line, col := 1, 1
	for _, c := range data[:off] {
		if c == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	return line, col
}

// reader walks the decoded JSON, keeping the first error with its location.
type reader struct {
	file  string
	err   *LoadError
	nodes int
	ids   map[string]bool
	auto  int
}

func (r *reader) fail(path, format string, args ...any) {
	if r.err == nil {
		r.err = &LoadError{File: r.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	}
}

func typeName(v any) string {
	switch v.(type) {
	case nil:
		return "null"
	case bool:
		return "true/false"
	case json.Number:
		return "a number"
	case string:
		return "text"
	case []any:
		return "a list"
	case map[string]any:
		return "an object"
	}
	return fmt.Sprintf("%T", v)
}

// object checks v is an object whose keys are all known.
func (r *reader) object(v any, path string, known ...string) map[string]any {
	m, ok := v.(map[string]any)
	if !ok {
		r.fail(path, "expected an object, found %s", typeName(v))
		return nil
	}
	var unknown []string
	for k := range m {
		found := false
		for _, kn := range known {
			if k == kn {
				found = true
				break
			}
		}
		if !found {
			unknown = append(unknown, k)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		r.fail(join(path, unknown[0]), "unknown field (known fields here: %s)", strings.Join(known, ", "))
	}
	return m
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// text reads a string field; numbers are accepted and kept as written.
func (r *reader) text(m map[string]any, path, key string, required bool) string {
	v, ok := m[key]
	if !ok || v == nil {
		if required {
			r.fail(join(path, key), "missing")
		}
		return ""
	}
	switch x := v.(type) {
	case string:
		return x
	case json.Number:
		return x.String()
	}
	r.fail(join(path, key), "expected text or a number, found %s", typeName(v))
	return ""
}

func (r *reader) str(m map[string]any, path, key string, required bool) string {
	v, ok := m[key]
	if !ok || v == nil {
		if required {
			r.fail(join(path, key), "missing")
		}
		return ""
	}
	s, isStr := v.(string)
	if !isStr {
		r.fail(join(path, key), "expected text, found %s", typeName(v))
	}
	return s
}

func (r *reader) integer(m map[string]any, path, key string, def int) int {
	v, ok := m[key]
	if !ok {
		return def
	}
	n, isNum := v.(json.Number)
	if !isNum {
		r.fail(join(path, key), "expected a whole number, found %s", typeName(v))
		return def
	}
	i, err := strconv.Atoi(n.String())
	if err != nil {
		r.fail(join(path, key), "expected a whole number, found %s", n.String())
		return def
	}
	return i
}

func (r *reader) project(doc any) *Project {
	m := r.object(doc, "", "format", "version", "title", "notes", "preparedBy", "objective", "currency", "decimals", "risk", "variables", "root")
	if m == nil {
		return nil
	}
	if f := r.str(m, "", "format", true); r.err == nil && f != FormatName {
		r.fail("format", "this is not a Ramify project (format is %q, expected %q)", f, FormatName)
		return nil
	}
	version := r.integer(m, "", "version", -1)
	if r.err != nil {
		return nil
	}
	if version < 0 {
		r.fail("version", "missing")
		return nil
	}
	if version > FormatVersion {
		r.fail("version", "the file was written by a newer Ramify (file format %d; this version reads up to %d); update Ramify to open it", version, FormatVersion)
		return nil
	}
	p := &Project{
		Title:      r.str(m, "", "title", false),
		Notes:      r.str(m, "", "notes", false),
		PreparedBy: r.str(m, "", "preparedBy", false),
		Currency:   r.str(m, "", "currency", false),
		Decimals:   r.integer(m, "", "decimals", 2),
		Objective:  Objective(r.str(m, "", "objective", false)),
	}
	switch p.Objective {
	case "":
		p.Objective = Maximize
	case Maximize, Minimize:
	default:
		r.fail("objective", "expected %q or %q, found %q", Maximize, Minimize, p.Objective)
	}
	if p.Decimals < 0 || p.Decimals > 12 {
		r.fail("decimals", "expected 0 to 12, found %d", p.Decimals)
	}
	if rv, ok := m["risk"]; ok {
		rm := r.object(rv, "risk", "attitude", "tolerance")
		if rm != nil {
			p.Risk.Mode = RiskMode(r.str(rm, "risk", "attitude", false))
			p.Risk.Tolerance = r.text(rm, "risk", "tolerance", false)
			if p.Risk.Mode == "neutral" {
				p.Risk.Mode = RiskNeutral
			}
			if p.Risk.Mode != RiskNeutral && p.Risk.Mode != RiskExponential {
				r.fail("risk.attitude", "expected %q or %q, found %q", "neutral", RiskExponential, p.Risk.Mode)
			}
		}
	}
	if vv, ok := m["variables"]; ok {
		list, isList := vv.([]any)
		if !isList {
			r.fail("variables", "expected a list, found %s", typeName(vv))
		}
		for i, item := range list {
			p.Variables = append(p.Variables, r.variable(item, fmt.Sprintf("variables[%d]", i)))
		}
	}
	root, ok := m["root"]
	if !ok {
		r.fail("root", "missing (a project needs a root node)")
		return nil
	}
	p.Root = r.node(root, "root", 0)
	return p
}

func (r *reader) variable(v any, path string) *Variable {
	m := r.object(v, path, "name", "value", "low", "high", "note", "distribution")
	if m == nil {
		return &Variable{}
	}
	out := &Variable{
		Name:  r.str(m, path, "name", true),
		Value: r.text(m, path, "value", true),
		Low:   r.text(m, path, "low", false),
		High:  r.text(m, path, "high", false),
		Note:  r.str(m, path, "note", false),
	}
	if dv, ok := m["distribution"]; ok {
		dp := join(path, "distribution")
		dm := r.object(dv, dp, "kind", "min", "mode", "max", "mean", "sd", "values", "probabilities")
		if dm != nil {
			d := &Distribution{
				Kind: DistKind(r.str(dm, dp, "kind", true)),
				Min:  r.text(dm, dp, "min", false), Mode: r.text(dm, dp, "mode", false), Max: r.text(dm, dp, "max", false),
				Mean: r.text(dm, dp, "mean", false), SD: r.text(dm, dp, "sd", false),
			}
			d.Values = r.textList(dm, dp, "values")
			d.Probs = r.textList(dm, dp, "probabilities")
			out.Dist = d
		}
	}
	return out
}

func (r *reader) textList(m map[string]any, path, key string) []string {
	v, ok := m[key]
	if !ok {
		return nil
	}
	list, isList := v.([]any)
	if !isList {
		r.fail(join(path, key), "expected a list, found %s", typeName(v))
		return nil
	}
	out := make([]string, len(list))
	for i, item := range list {
		switch x := item.(type) {
		case string:
			out[i] = x
		case json.Number:
			out[i] = x.String()
		default:
			r.fail(fmt.Sprintf("%s.%s[%d]", path, key, i), "expected text or a number, found %s", typeName(item))
		}
	}
	return out
}

func (r *reader) node(v any, path string, depth int) *Node {
	if r.err != nil {
		return nil
	}
	if depth > MaxDepth {
		r.fail(path, "the tree is deeper than %d levels", MaxDepth)
		return nil
	}
	r.nodes++
	if r.nodes > MaxNodes {
		r.fail(path, "the project has more than %d nodes", MaxNodes)
		return nil
	}
	m := r.object(v, path, "id", "kind", "name", "note", "payoff", "collapsed", "branches")
	if m == nil {
		return nil
	}
	n := &Node{
		ID:     r.str(m, path, "id", false),
		Kind:   Kind(r.str(m, path, "kind", true)),
		Name:   r.str(m, path, "name", false),
		Note:   r.str(m, path, "note", false),
		Payoff: r.text(m, path, "payoff", false),
	}
	if c, ok := m["collapsed"]; ok {
		b, isBool := c.(bool)
		if !isBool {
			r.fail(join(path, "collapsed"), "expected true or false, found %s", typeName(c))
		}
		n.Collapsed = b
	}
	switch n.Kind {
	case Decision, Chance, End:
	default:
		if r.err == nil {
			r.fail(join(path, "kind"), "expected decision, chance or end, found %q", n.Kind)
		}
	}
	if n.ID != "" {
		if r.ids[n.ID] {
			r.fail(join(path, "id"), "the id %q is used by another node", n.ID)
		}
		r.ids[n.ID] = true
	}
	if bv, ok := m["branches"]; ok {
		list, isList := bv.([]any)
		if !isList {
			r.fail(join(path, "branches"), "expected a list, found %s", typeName(bv))
		}
		for i, item := range list {
			bp := fmt.Sprintf("%s.branches[%d]", path, i)
			bm := r.object(item, bp, "label", "probability", "cash", "to")
			if bm == nil {
				return n
			}
			b := &Branch{
				Label:       r.str(bm, bp, "label", false),
				Probability: r.text(bm, bp, "probability", false),
				Cash:        r.text(bm, bp, "cash", false),
			}
			to, ok := bm["to"]
			if !ok {
				r.fail(join(bp, "to"), "missing (every branch leads to a node)")
				return n
			}
			b.To = r.node(to, join(bp, "to"), depth+1)
			n.Branches = append(n.Branches, b)
		}
	}
	return n
}

// assignIDs gives every node without an id a fresh one, n1, n2, … not yet used.
func (r *reader) assignIDs(root *Node) {
	Walk(root, func(n *Node, _ int) bool {
		if n.ID == "" {
			n.ID = nextID(r.ids, &r.auto)
		}
		return true
	})
}

func nextID(used map[string]bool, counter *int) string {
	for {
		*counter++
		id := "n" + strconv.Itoa(*counter)
		if !used[id] {
			used[id] = true
			return id
		}
	}
}

// ---- writer ----

// Marshal writes the project in the stable, diffable file format: fixed key
// order, two-space indent, one field per line; empty optional fields are left out.
func Marshal(p *Project) ([]byte, error) {
	var b bytes.Buffer
	b.Grow(estimateFileSize(p)) // growing a large buffer step by step costs more than writing it
	w := &writer{b: &b}
	w.open("{")
	w.field("format", FormatName)
	w.num("version", FormatVersion)
	w.opt("title", p.Title)
	w.opt("notes", p.Notes)
	w.opt("preparedBy", p.PreparedBy)
	obj := p.Objective
	if obj == "" {
		obj = Maximize
	}
	w.field("objective", string(obj))
	w.opt("currency", p.Currency)
	w.num("decimals", p.Decimals)
	if p.Risk.Mode != RiskNeutral || p.Risk.Tolerance != "" {
		w.key("risk")
		w.open("{")
		mode := string(p.Risk.Mode)
		if mode == "" {
			mode = "neutral"
		}
		w.field("attitude", mode)
		w.opt("tolerance", p.Risk.Tolerance)
		w.close("}")
	}
	if len(p.Variables) > 0 {
		w.key("variables")
		w.open("[")
		for _, v := range p.Variables {
			w.item()
			w.open("{")
			w.field("name", v.Name)
			w.field("value", v.Value)
			w.opt("low", v.Low)
			w.opt("high", v.High)
			w.opt("note", v.Note)
			if d := v.Dist; d != nil {
				w.key("distribution")
				w.open("{")
				w.field("kind", string(d.Kind))
				w.opt("min", d.Min)
				w.opt("mode", d.Mode)
				w.opt("max", d.Max)
				w.opt("mean", d.Mean)
				w.opt("sd", d.SD)
				w.list("values", d.Values)
				w.list("probabilities", d.Probs)
				w.close("}")
			}
			w.close("}")
		}
		w.close("]")
	}
	if p.Root != nil {
		w.key("root")
		w.node(p.Root)
	}
	w.close("}")
	b.WriteByte('\n')
	return b.Bytes(), nil
}

// estimateFileSize guesses the written size: each node takes a few lines of
// fields, indented three levels deeper per tree level (node, branches, branch).
func estimateFileSize(p *Project) int {
	size := 1024 + 256*len(p.Variables)
	Walk(p.Root, func(n *Node, depth int) bool {
		size += 160 + len(n.Name) + len(n.Note) + 30*min(3*depth+2, maxIndent)
		for _, b := range n.Branches {
			size += len(b.Label) + len(b.Probability) + len(b.Cash)
		}
		return true
	})
	return size
}

type writer struct {
	b      *bytes.Buffer
	indent int
	first  bool
}

// maxIndent caps indentation so a very deep tree does not write a file that grows
// with the square of its depth; ordinary trees never reach it.
const maxIndent = 64

var indentSpaces = strings.Repeat("  ", maxIndent)

func (w *writer) newline() {
	w.b.WriteByte('\n')
	w.b.WriteString(indentSpaces[:2*min(w.indent, maxIndent)])
}

func (w *writer) open(bracket string) {
	w.b.WriteString(bracket)
	w.indent++
	w.first = true
}

func (w *writer) close(bracket string) {
	w.indent--
	if !w.first {
		w.newline()
	}
	w.b.WriteString(bracket)
	w.first = false
}

func (w *writer) item() {
	if !w.first {
		w.b.WriteByte(',')
	}
	w.first = false
	w.newline()
}

func (w *writer) key(k string) {
	w.item()
	writeJSONString(w.b, k)
	w.b.WriteString(": ")
}

func (w *writer) field(k, v string) {
	w.key(k)
	writeJSONString(w.b, v)
}

func (w *writer) opt(k, v string) {
	if v != "" {
		w.field(k, v)
	}
}

func (w *writer) num(k string, v int) {
	w.key(k)
	w.b.WriteString(strconv.Itoa(v))
}

func (w *writer) list(k string, vs []string) {
	if len(vs) == 0 {
		return
	}
	w.key(k)
	w.b.WriteByte('[')
	for i, v := range vs {
		if i > 0 {
			w.b.WriteString(", ")
		}
		writeJSONString(w.b, v)
	}
	w.b.WriteByte(']')
}

// node writes a subtree with an explicit stack, so depth costs no Go stack.
func (w *writer) node(root *Node) {
	type frame struct {
		n    *Node
		next int // next branch to write; -1 before the node's own fields
	}
	stack := []frame{{root, -1}}
	for len(stack) > 0 {
		top := &stack[len(stack)-1]
		n := top.n
		if top.next == -1 {
			w.open("{")
			w.field("id", n.ID)
			w.field("kind", string(n.Kind))
			w.opt("name", n.Name)
			w.opt("note", n.Note)
			w.opt("payoff", n.Payoff)
			if n.Collapsed {
				w.key("collapsed")
				w.b.WriteString("true")
			}
			top.next = 0
			if len(n.Branches) > 0 {
				w.key("branches")
				w.open("[")
			}
		}
		if top.next < len(n.Branches) {
			b := n.Branches[top.next]
			top.next++
			w.item()
			w.open("{")
			w.opt("label", b.Label)
			w.opt("probability", b.Probability)
			w.opt("cash", b.Cash)
			if b.To != nil {
				w.key("to")
				stack = append(stack, frame{b.To, -1})
			} else {
				w.close("}")
			}
			continue
		}
		if len(n.Branches) > 0 {
			w.close("]")
		}
		w.close("}")
		stack = stack[:len(stack)-1]
		if len(stack) > 0 {
			w.close("}") // the branch object that led here
		}
	}
}

func writeJSONString(b *bytes.Buffer, s string) {
	plain := true
	for i := 0; i < len(s) && plain; i++ {
		c := s[i]
		plain = c >= 0x20 && c < 0x7f && c != '"' && c != '\\' && c != '<' && c != '>' && c != '&'
	}
	if plain { // the common case, written as encoding/json would write it
		b.WriteByte('"')
		b.WriteString(s)
		b.WriteByte('"')
		return
	}
	enc, _ := json.Marshal(s) // a string always marshals
	b.Write(enc)
}

// Save writes the project to path atomically, keeping the previous file as path.bak.
func Save(path string, p *Project) error {
	data, err := Marshal(p)
	if err != nil {
		return err
	}
	return WriteFileAtomic(path, data, true)
}

// WriteFileAtomic writes data to a temporary file in the same folder, flushes it
// to disk and renames it over path, so a failure never leaves a partial file and
// the old file stays intact. With backup, the old file is first kept as path.bak.
func WriteFileAtomic(path string, data []byte, backup bool) error {
	return writeAtomic(path, backup, func(f io.Writer) error {
		_, err := f.Write(data)
		return err
	})
}

// WriteAtomic is WriteFileAtomic for content produced by a writer function.
func WriteAtomic(path string, write func(io.Writer) error) error {
	return writeAtomic(path, false, write)
}

func writeAtomic(path string, backup bool, write func(io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %s", path, cleanOSError(err))
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err = write(tmp); err != nil {
		return fmt.Errorf("cannot write %s: %s", path, cleanOSError(err))
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("cannot write %s: %s", path, cleanOSError(err))
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("cannot write %s: %s", path, cleanOSError(err))
	}
	if info, statErr := os.Stat(path); statErr == nil {
		_ = os.Chmod(tmp.Name(), info.Mode().Perm())
		if backup {
			if err = copyFile(path, path+".bak"); err != nil {
				return fmt.Errorf("cannot keep a backup of %s: %s", path, cleanOSError(err))
			}
		}
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("cannot write %s: %s", path, cleanOSError(err))
	}
	return nil
}

func copyFile(from, to string) error {
	data, err := os.ReadFile(from)
	if err != nil {
		return err
	}
	return os.WriteFile(to, data, 0o644)
}
