package engine

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// ---- project settings ----

// Settings are the project-wide fields edited in the settings dialog.
type Settings struct {
	Title      string
	Notes      string
	PreparedBy string
	Objective  Objective
	Currency   string
	Decimals   int
	Risk       RiskAttitude
}

// SettingsOf returns the project's current settings.
func SettingsOf(p *Project) Settings {
	return Settings{Title: p.Title, Notes: p.Notes, PreparedBy: p.PreparedBy, Objective: p.Objective,
		Currency: p.Currency, Decimals: p.Decimals, Risk: p.Risk}
}

// SetSettings replaces the project settings after checking them.
type SetSettings struct{ Settings Settings }

func (c *SetSettings) Describe() string { return "Change project settings" }

func (c *SetSettings) Apply(p *Project) (Command, error) {
	s := c.Settings
	switch s.Objective {
	case Maximize, Minimize:
	default:
		return nil, fmt.Errorf("objective: expected %q or %q, found %q", Maximize, Minimize, s.Objective)
	}
	if s.Decimals < 0 || s.Decimals > 12 {
		return nil, fmt.Errorf("decimals: expected 0 to 12, found %d", s.Decimals)
	}
	switch s.Risk.Mode {
	case RiskNeutral:
	case RiskExponential:
		if strings.TrimSpace(s.Risk.Tolerance) == "" {
			return nil, errors.New("risk tolerance: missing (give the R of the exponential utility)")
		}
		if _, err := ParseFormula(s.Risk.Tolerance); err != nil {
			return nil, fmt.Errorf("risk tolerance: %w", err)
		}
	default:
		return nil, fmt.Errorf("risk attitude: expected neutral or %q, found %q", RiskExponential, s.Risk.Mode)
	}
	old := SettingsOf(p)
	p.Title, p.Notes, p.PreparedBy, p.Objective = s.Title, s.Notes, s.PreparedBy, s.Objective
	p.Currency, p.Decimals, p.Risk = s.Currency, s.Decimals, s.Risk
	return &SetSettings{Settings: old}, nil
}

// ---- variables ----

// AddVariable inserts a variable at position At (-1: last).
type AddVariable struct {
	Variable *Variable
	At       int
}

func (c *AddVariable) Describe() string { return "Add variable" }

func (c *AddVariable) Apply(p *Project) (Command, error) {
	v := c.Variable
	if v == nil {
		return nil, errors.New("no variable given")
	}
	if !ValidName(v.Name) {
		return nil, fmt.Errorf("variable %q: not a valid name (letters, digits and _, not starting with a digit; not a function name or rest)", v.Name)
	}
	if p.Variable(v.Name) != nil {
		return nil, fmt.Errorf("variable %q: the name is already used by another variable", v.Name)
	}
	if _, err := ParseFormula(v.Value); err != nil {
		return nil, fmt.Errorf("variable %q value: %w", v.Name, err)
	}
	at := c.At
	if at < 0 || at > len(p.Variables) {
		at = len(p.Variables)
	}
	p.Variables = append(p.Variables, nil)
	copy(p.Variables[at+1:], p.Variables[at:])
	p.Variables[at] = v
	return &takeVariable{Variable: v}, nil
}

// NewVariableName returns an unused name: x1, x2, …
func NewVariableName(p *Project) string {
	for i := 1; ; i++ {
		name := "x" + strconv.Itoa(i)
		if p.Variable(name) == nil {
			return name
		}
	}
}

// RemoveVariable removes a variable that nothing uses any more.
type RemoveVariable struct{ Name string }

func (c *RemoveVariable) Describe() string { return "Remove variable" }

func (c *RemoveVariable) Apply(p *Project) (Command, error) {
	at := -1
	for i, v := range p.Variables {
		if v.Name == c.Name {
			at = i
		}
	}
	if at < 0 {
		return nil, fmt.Errorf("variable %q: there is no such variable", c.Name)
	}
	var uses []string
	self := fmt.Sprintf("variable %q ", c.Name)
	for _, u := range Uses(p, c.Name) {
		if !strings.HasPrefix(u, self) { // its own range or distribution goes with it
			uses = append(uses, u)
		}
	}
	if len(uses) > 0 {
		return nil, fmt.Errorf("variable %q is still used by %s; change those formulas first", c.Name, strings.Join(uses, ", "))
	}
	return (&takeVariable{Variable: p.Variables[at]}).Apply(p)
}

// takeVariable removes a variable without checks; it undoes AddVariable exactly.
type takeVariable struct{ Variable *Variable }

func (c *takeVariable) Describe() string { return "Add variable" }

func (c *takeVariable) Apply(p *Project) (Command, error) {
	at := -1
	for i, v := range p.Variables {
		if v == c.Variable {
			at = i
		}
	}
	if at < 0 {
		return nil, fmt.Errorf("variable %q: there is no such variable", c.Variable.Name)
	}
	v := p.Variables[at]
	p.Variables = append(append([]*Variable(nil), p.Variables[:at]...), p.Variables[at+1:]...)
	if len(p.Variables) == 0 {
		p.Variables = nil
	}
	return &insertVariable{Variable: v, At: at}, nil
}

// insertVariable puts a removed variable back exactly, without the checks AddVariable makes.
type insertVariable struct {
	Variable *Variable
	At       int
}

func (c *insertVariable) Describe() string { return "Remove variable" }

func (c *insertVariable) Apply(p *Project) (Command, error) {
	at := min(max(c.At, 0), len(p.Variables))
	p.Variables = append(p.Variables, nil)
	copy(p.Variables[at+1:], p.Variables[at:])
	p.Variables[at] = c.Variable
	return &takeVariable{Variable: c.Variable}, nil
}

// formulaField is one formula text in the project, with the place it lives.
type formulaField struct {
	Place string
	Text  *string
}

// formulaFields lists every formula text of the project: node payoffs, branch
// probabilities and cash, variable values, ranges and distribution parameters,
// and the risk tolerance.
func formulaFields(p *Project) []formulaField {
	var out []formulaField
	add := func(place string, s *string) { out = append(out, formulaField{place, s}) }
	for _, v := range p.Variables {
		place := fmt.Sprintf("variable %q", v.Name)
		add(place+" value", &v.Value)
		add(place+" low", &v.Low)
		add(place+" high", &v.High)
		if d := v.Dist; d != nil {
			add(place+" distribution min", &d.Min)
			add(place+" distribution mode", &d.Mode)
			add(place+" distribution max", &d.Max)
			add(place+" distribution mean", &d.Mean)
			add(place+" distribution sd", &d.SD)
			for i := range d.Values {
				add(fmt.Sprintf("%s distribution value %d", place, i+1), &d.Values[i])
			}
			for i := range d.Probs {
				add(fmt.Sprintf("%s distribution probability %d", place, i+1), &d.Probs[i])
			}
		}
	}
	add("risk tolerance", &p.Risk.Tolerance)
	Walk(p.Root, func(n *Node, _ int) bool {
		add(Place(n, -1)+" payoff", &n.Payoff)
		for i, b := range n.Branches {
			add(Place(n, i)+" probability", &b.Probability)
			add(Place(n, i)+" cash", &b.Cash)
		}
		return true
	})
	return out
}

// Uses names every place whose formula refers to the variable name.
func Uses(p *Project, name string) []string {
	var out []string
	for _, f := range formulaFields(p) {
		if *f.Text != "" && UsesName(*f.Text, name) {
			out = append(out, f.Place)
		}
	}
	return out
}

// RenameVariableCmd renames a variable and every formula that uses it.
type RenameVariableCmd struct{ Old, New string }

func (c *RenameVariableCmd) Describe() string { return "Rename variable" }

func (c *RenameVariableCmd) Apply(p *Project) (Command, error) {
	v := p.Variable(c.Old)
	if v == nil {
		return nil, fmt.Errorf("variable %q: there is no such variable", c.Old)
	}
	if c.New == c.Old {
		return nil, fmt.Errorf("variable %q: the name is unchanged", c.Old)
	}
	if !ValidName(c.New) {
		return nil, fmt.Errorf("variable %q: %q is not a valid name (letters, digits and _, not starting with a digit; not a function name or rest)", c.Old, c.New)
	}
	if p.Variable(c.New) != nil {
		return nil, fmt.Errorf("variable %q: the name %q is already used by another variable", c.Old, c.New)
	}
	inv := &restoreTexts{Desc: "Rename variable", Var: v, Name: v.Name}
	for _, f := range formulaFields(p) {
		if *f.Text == "" {
			continue
		}
		if renamed := RenameVariable(*f.Text, c.Old, c.New); renamed != *f.Text {
			inv.Texts = append(inv.Texts, textValue{f.Text, *f.Text})
			*f.Text = renamed
		}
	}
	v.Name = c.New
	return inv, nil
}

type textValue struct {
	ptr   *string
	value string
}

// restoreTexts puts back formula texts (and a variable name) exactly as they were.
type restoreTexts struct {
	Desc  string
	Var   *Variable
	Name  string
	Texts []textValue
}

func (c *restoreTexts) Describe() string { return c.Desc }

func (c *restoreTexts) Apply(p *Project) (Command, error) {
	inv := &restoreTexts{Desc: c.Desc, Var: c.Var}
	if c.Var != nil {
		inv.Name = c.Var.Name
		c.Var.Name = c.Name
	}
	for _, t := range c.Texts {
		inv.Texts = append(inv.Texts, textValue{t.ptr, *t.ptr})
		*t.ptr = t.value
	}
	return inv, nil
}

// Variable fields SetVariableField can change.
const (
	VarValue = "value"
	VarLow   = "low"
	VarHigh  = "high"
	VarNote  = "note"
)

// SetVariableField changes a variable's value, low, high or note.
type SetVariableField struct {
	Name  string
	Field string
	Value string
}

func (c *SetVariableField) Describe() string { return "Change variable " + c.Field }

func (c *SetVariableField) Apply(p *Project) (Command, error) {
	v := p.Variable(c.Name)
	if v == nil {
		return nil, fmt.Errorf("variable %q: there is no such variable", c.Name)
	}
	var ptr *string
	switch c.Field {
	case VarValue:
		if _, err := ParseFormula(c.Value); err != nil {
			return nil, fmt.Errorf("variable %q value: %w", c.Name, err)
		}
		ptr = &v.Value
	case VarLow, VarHigh:
		if err := checkOptionalFormula(c.Value); err != nil {
			return nil, fmt.Errorf("variable %q %s: %w", c.Name, c.Field, err)
		}
		ptr = &v.Low
		if c.Field == VarHigh {
			ptr = &v.High
		}
	case VarNote:
		ptr = &v.Note
	default:
		return nil, fmt.Errorf("variable %q: no field %q", c.Name, c.Field)
	}
	old := *ptr
	*ptr = c.Value
	return &SetVariableField{Name: c.Name, Field: c.Field, Value: old}, nil
}

// SetDistribution sets or clears (nil) a variable's distribution for simulation.
type SetDistribution struct {
	Name string
	Dist *Distribution
}

func (c *SetDistribution) Describe() string { return "Change distribution" }

func (c *SetDistribution) Apply(p *Project) (Command, error) {
	v := p.Variable(c.Name)
	if v == nil {
		return nil, fmt.Errorf("variable %q: there is no such variable", c.Name)
	}
	if d := c.Dist; d != nil {
		switch d.Kind {
		case DistFixed, DistUniform, DistTriangular, DistPERT, DistNormal, DistLognormal, DistDiscrete:
		default:
			return nil, fmt.Errorf("variable %q distribution: unknown kind %q", c.Name, d.Kind)
		}
		params := []struct{ name, text string }{{"min", d.Min}, {"mode", d.Mode}, {"max", d.Max}, {"mean", d.Mean}, {"sd", d.SD}}
		for i, t := range d.Values {
			params = append(params, struct{ name, text string }{fmt.Sprintf("value %d", i+1), t})
		}
		for i, t := range d.Probs {
			params = append(params, struct{ name, text string }{fmt.Sprintf("probability %d", i+1), t})
		}
		for _, pr := range params {
			if err := checkOptionalFormula(pr.text); err != nil {
				return nil, fmt.Errorf("variable %q distribution %s: %w", c.Name, pr.name, err)
			}
		}
		if len(d.Values) != len(d.Probs) {
			return nil, fmt.Errorf("variable %q distribution: %d values but %d probabilities", c.Name, len(d.Values), len(d.Probs))
		}
	}
	old := v.Dist
	v.Dist = c.Dist
	return &SetDistribution{Name: c.Name, Dist: old}, nil
}
