package engine

import (
	"encoding/csv"
	"fmt"
	"io"
	"strings"
)

// JSON shapes of a result, shared by the CLI and the GUI's exports. Numbers are
// exact decimal strings.
type (
	ResultDoc struct {
		Title     string      `json:"title,omitempty"`
		Objective Objective   `json:"objective"`
		Currency  string      `json:"currency,omitempty"`
		Value     string      `json:"value"`
		Certainty string      `json:"certaintyEquivalent,omitempty"`
		Policy    []PolicyDoc `json:"policy"`
		Nodes     []NodeDoc   `json:"nodes"`
		Paths     []PathDoc   `json:"paths"`
	}
	PolicyDoc struct {
		Node   string   `json:"node"`
		Name   string   `json:"name"`
		Choice string   `json:"choice"`
		Ties   []string `json:"ties,omitempty"`
	}
	NodeDoc struct {
		ID     string `json:"id"`
		Kind   Kind   `json:"kind"`
		Name   string `json:"name,omitempty"`
		Value  string `json:"value"`
		CE     string `json:"certaintyEquivalent,omitempty"`
		Choice string `json:"choice,omitempty"`
	}
	PathDoc struct {
		End          string   `json:"end"`
		Path         []string `json:"path"`
		Probability  string   `json:"probability"`
		Payoff       string   `json:"payoff"`
		Contribution string   `json:"contribution"`
		Optimal      bool     `json:"optimal"`
	}
)

// ResultJSON builds the document `ramify eval --json` prints.
func ResultJSON(r *Result) ResultDoc {
	p := r.Project
	doc := ResultDoc{Title: p.Title, Objective: p.Objective, Currency: p.Currency, Value: r.ValueOf(p.Root).String(),
		Policy: []PolicyDoc{}, Nodes: []NodeDoc{}, Paths: []PathDoc{}}
	if ce, ok := r.CertaintyEquivalent(p.Root); ok {
		doc.Certainty = ce.String()
	}
	for _, s := range r.Policy() {
		pd := PolicyDoc{Node: s.Node.ID, Name: s.Node.Name, Choice: s.Node.Branches[s.Choice].Label}
		for _, t := range s.Ties {
			pd.Ties = append(pd.Ties, s.Node.Branches[t].Label)
		}
		doc.Policy = append(doc.Policy, pd)
	}
	for _, n := range r.Nodes {
		nd := NodeDoc{ID: n.ID, Kind: n.Kind, Name: n.Name, Value: r.ValueOf(n).String()}
		if ce, ok := r.CertaintyEquivalent(n); ok {
			nd.CE = ce.String()
		}
		if c := r.Choice(n); c >= 0 {
			nd.Choice = n.Branches[c].Label
		}
		doc.Nodes = append(doc.Nodes, nd)
	}
	for _, row := range r.Paths() {
		doc.Paths = append(doc.Paths, PathDoc{End: row.End.ID, Path: row.Labels, Probability: row.Probability.String(),
			Payoff: row.Payoff.String(), Contribution: row.Contribution.String(), Optimal: row.Optimal})
	}
	return doc
}

// CSVTables names the tables WriteCSV can write.
var CSVTables = []string{"paths", "strategies", "variables"}

// WriteCSV writes one table as CSV with exact decimal strings.
func WriteCSV(w io.Writer, r *Result, table string) error {
	cw := csv.NewWriter(w)
	var rows [][]string
	switch table {
	case "paths":
		rows = append(rows, []string{"end", "path", "probability", "payoff", "contribution", "optimal"})
		for _, row := range r.Paths() {
			rows = append(rows, []string{row.End.ID, strings.Join(row.Labels, " > "), row.Probability.String(),
				row.Payoff.String(), row.Contribution.String(), fmt.Sprint(row.Optimal)})
		}
	case "variables":
		rows = append(rows, []string{"name", "value", "formula", "low", "high", "note"})
		for _, v := range r.Project.Variables {
			val := ""
			if d, ok := r.Vars[v.Name]; ok {
				val = d.String()
			}
			rows = append(rows, []string{v.Name, val, v.Value, v.Low, v.High, v.Note})
		}
	case "strategies":
		rows = StrategyRowsCSV(r)
	default:
		return fmt.Errorf("unknown table %q (use %s)", table, strings.Join(CSVTables, ", "))
	}
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// StrategyRowsCSV is replaced by the risk-profile analysis's strategy table once it
// is wired in; until then it lists each root alternative's value.
var StrategyRowsCSV = func(r *Result) [][]string {
	rows := [][]string{{"alternative", "value", "recommended"}}
	root := r.Project.Root
	if root == nil || root.Kind != Decision {
		return rows
	}
	for i := range root.Branches {
		rows = append(rows, []string{BranchTitle(root, i), r.BranchValue(root, i).String(), fmt.Sprint(r.Choice(root) == i)})
	}
	return rows
}
