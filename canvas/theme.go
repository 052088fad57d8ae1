// Package canvas lays out a decision tree, turns it into one scene of simple
// primitives, and draws that scene on screen (Fyne), and to SVG, PDF and PNG.
// It reads engine.Project and engine.Result and never computes a value itself.
package canvas

import (
	"image/color"
	"strings"
)

// Role says what a primitive is, so a theme can style it. Renderers never pick
// a colour themselves: they ask the theme for the role's style.
type Role uint8

const (
	RoleBranch         Role = iota // a branch of a tree without results
	RoleBranchPolicy               // a branch on the recommended path
	RoleBranchRejected             // an alternative not taken, and what lies below it
	RoleDecisionNode               // the square of a decision
	RoleChanceNode                 // the circle of a chance node
	RoleEndNode                    // the end marker
	RoleMutedNode                  // any node off the recommended path
	RoleCollapsed                  // the fold mark of a collapsed subtree
	RoleLabel                      // branch label text
	RoleProbability                // probability text
	RoleCash                       // cash text on a branch
	RoleValue                      // rolled-back value text at a node
	RolePayoff                     // path payoff text at an end
	RoleMutedText                  // any text off the recommended path
	RoleNote                       // small extra notes (break-even, hidden count)
	RoleProblem                    // problem message text and the "!" in the mark
	RoleProblemMark                // the diamond marking a node with problems
	RoleSelection                  // the selection highlight
	RoleTitle                      // title block text on exported pages
	RoleFrame                      // title block rule and page furniture
	roleCount
)

// Style is how one role is drawn. A zero alpha means "no stroke" or "no fill".
type Style struct {
	Stroke color.NRGBA
	Fill   color.NRGBA
	Width  float64   // stroke width in logical units (points)
	Dash   []float64 // dash pattern; nil for solid
}

// Theme holds every colour, size and font choice of the drawing in one place.
// Logical units are points (1/72 inch); the screen view scales them.
type Theme struct {
	Name       string
	Background color.NRGBA

	// Typography. Files use the Liberation Sans faces embedded by gonum/plot;
	// the screen uses Fyne's theme font. Sizes are in points.
	FontFamily  string // CSS family list written into SVG
	LabelSize   float64
	NumberSize  float64
	ValueSize   float64
	NoteSize    float64
	TitleSize   float64
	LineSpacing float64 // line height as a multiple of the font size
	Ascent      float64 // baseline below the top of a line, as a multiple of size

	// Geometry.
	NodeSize      float64 // side of the decision square, diameter of the chance circle
	EndWidth      float64 // the end marker: a short upright bar with a rounded cap
	EndHeight     float64
	MinBranch     float64 // shortest horizontal branch
	FanWidth      float64 // horizontal run of the slanted part of a branch
	StubLength    float64 // line leaving a node before its branches fan out
	TextPad       float64 // gap between text and lines
	SiblingGap    float64 // vertical gap between neighbouring siblings
	SubtreeGap    float64 // vertical gap between neighbouring subtrees
	MaxLabelWidth float64 // longer labels are cut with an ellipsis
	MaxNoteWidth  float64
	SelectionPad  float64

	styles [roleCount]Style
}

// Style returns the style of a role.
func (t *Theme) Style(r Role) Style {
	if int(r) < len(t.styles) {
		return t.styles[r]
	}
	return Style{}
}

// SetStyle replaces the style of a role (for callers building their own theme).
func (t *Theme) SetStyle(r Role, s Style) {
	if int(r) < len(t.styles) {
		t.styles[r] = s
	}
}

func rgb(hex uint32) color.NRGBA {
	return color.NRGBA{R: uint8(hex >> 16), G: uint8(hex >> 8), B: uint8(hex), A: 0xff}
}

var none = color.NRGBA{}

func baseTheme() Theme {
	return Theme{
		FontFamily:    "'Liberation Sans', Arimo, Arial, Helvetica, sans-serif",
		LabelSize:     10,
		NumberSize:    9,
		ValueSize:     9.5,
		NoteSize:      7.5,
		TitleSize:     14,
		LineSpacing:   1.25,
		Ascent:        0.905, // Liberation Sans ascender / units per em (1854/2048)
		NodeSize:      13,
		EndWidth:      5,
		EndHeight:     14,
		MinBranch:     56,
		FanWidth:      22,
		StubLength:    6,
		TextPad:       3,
		SiblingGap:    6,
		SubtreeGap:    12,
		MaxLabelWidth: 180,
		MaxNoteWidth:  200,
		SelectionPad:  3,
	}
}

// LightTheme is the default on-screen theme: ink-blue lines on warm paper.
func LightTheme() Theme {
	t := baseTheme()
	t.Name = "light"
	t.Background = rgb(0xfbfaf6)
	ink, teal, ochre, plum := rgb(0x2b3a4a), rgb(0x0f7d6e), rgb(0xb7791f), rgb(0x5b4b8a)
	muted := rgb(0xa9b0b8)
	t.styles = [roleCount]Style{
		RoleBranch:         {Stroke: ink, Width: 1.1},
		RoleBranchPolicy:   {Stroke: teal, Width: 2.4},
		RoleBranchRejected: {Stroke: muted, Width: 0.9},
		RoleDecisionNode:   {Stroke: ink, Fill: rgb(0xdce8f4), Width: 1.3},
		RoleChanceNode:     {Stroke: ink, Fill: rgb(0xf6e7c8), Width: 1.3},
		RoleEndNode:        {Stroke: plum, Fill: plum, Width: 1},
		RoleMutedNode:      {Stroke: muted, Fill: rgb(0xf1f1ee), Width: 1},
		RoleCollapsed:      {Stroke: ochre, Fill: rgb(0xfff3d6), Width: 1.2, Dash: []float64{3, 2}},
		RoleLabel:          {Fill: ink},
		RoleProbability:    {Fill: ochre},
		RoleCash:           {Fill: rgb(0x51606e)},
		RoleValue:          {Fill: teal},
		RolePayoff:         {Fill: plum},
		RoleMutedText:      {Fill: rgb(0x8c949c)},
		RoleNote:           {Fill: rgb(0x6b5a3a)},
		RoleProblem:        {Stroke: rgb(0xc0392b), Fill: rgb(0xc0392b), Width: 1.2},
		RoleProblemMark:    {Stroke: rgb(0xc0392b), Fill: rgb(0xfff1ee), Width: 1.2},
		RoleSelection:      {Stroke: rgb(0x2f6fd6), Fill: color.NRGBA{0x2f, 0x6f, 0xd6, 0x22}, Width: 1.5},
		RoleTitle:          {Fill: ink},
		RoleFrame:          {Stroke: muted, Width: 0.6},
	}
	return t
}

// DarkTheme is the on-screen theme for dark surroundings.
func DarkTheme() Theme {
	t := baseTheme()
	t.Name = "dark"
	t.Background = rgb(0x1b2027)
	ink, mint, amber, lilac := rgb(0xd8dee6), rgb(0x5fd3bc), rgb(0xf0b65a), rgb(0xb9a7f0)
	muted := rgb(0x56606b)
	t.styles = [roleCount]Style{
		RoleBranch:         {Stroke: ink, Width: 1.1},
		RoleBranchPolicy:   {Stroke: mint, Width: 2.4},
		RoleBranchRejected: {Stroke: muted, Width: 0.9},
		RoleDecisionNode:   {Stroke: ink, Fill: rgb(0x27425e), Width: 1.3},
		RoleChanceNode:     {Stroke: ink, Fill: rgb(0x5a4520), Width: 1.3},
		RoleEndNode:        {Stroke: lilac, Fill: lilac, Width: 1},
		RoleMutedNode:      {Stroke: muted, Fill: rgb(0x252b33), Width: 1},
		RoleCollapsed:      {Stroke: amber, Fill: rgb(0x3a3220), Width: 1.2, Dash: []float64{3, 2}},
		RoleLabel:          {Fill: ink},
		RoleProbability:    {Fill: amber},
		RoleCash:           {Fill: rgb(0xaab4bf)},
		RoleValue:          {Fill: mint},
		RolePayoff:         {Fill: lilac},
		RoleMutedText:      {Fill: rgb(0x7a848f)},
		RoleNote:           {Fill: rgb(0xd9c48f)},
		RoleProblem:        {Stroke: rgb(0xff6b5b), Fill: rgb(0xff6b5b), Width: 1.2},
		RoleProblemMark:    {Stroke: rgb(0xff6b5b), Fill: rgb(0x3a1f1c), Width: 1.2},
		RoleSelection:      {Stroke: rgb(0x6aa8ff), Fill: color.NRGBA{0x6a, 0xa8, 0xff, 0x30}, Width: 1.5},
		RoleTitle:          {Fill: ink},
		RoleFrame:          {Stroke: muted, Width: 0.6},
	}
	return t
}

// PrintTheme prints well in greyscale: colour is never the only cue. The
// recommended path is also much thicker, rejected alternatives are also dashed
// and lighter, collapsed stubs are dotted.
func PrintTheme() Theme {
	t := baseTheme()
	t.Name = "print"
	t.Background = rgb(0xffffff)
	black, dark, mid, light := rgb(0x000000), rgb(0x333333), rgb(0x666666), rgb(0x9a9a9a)
	t.styles = [roleCount]Style{
		RoleBranch:         {Stroke: dark, Width: 1},
		RoleBranchPolicy:   {Stroke: black, Width: 2.8},
		RoleBranchRejected: {Stroke: light, Width: 0.8, Dash: []float64{4, 2.5}},
		RoleDecisionNode:   {Stroke: black, Fill: rgb(0xe6e6e6), Width: 1.3},
		RoleChanceNode:     {Stroke: black, Fill: rgb(0xffffff), Width: 1.3},
		RoleEndNode:        {Stroke: black, Fill: black, Width: 1},
		RoleMutedNode:      {Stroke: light, Fill: rgb(0xffffff), Width: 0.8, Dash: []float64{2, 1.5}},
		RoleCollapsed:      {Stroke: dark, Fill: rgb(0xf2f2f2), Width: 1, Dash: []float64{1, 1.5}},
		RoleLabel:          {Fill: black},
		RoleProbability:    {Fill: dark},
		RoleCash:           {Fill: dark},
		RoleValue:          {Fill: black},
		RolePayoff:         {Fill: black},
		RoleMutedText:      {Fill: mid},
		RoleNote:           {Fill: mid},
		RoleProblem:        {Stroke: black, Fill: black, Width: 1.4},
		RoleProblemMark:    {Stroke: black, Fill: rgb(0xffffff), Width: 1.4},
		RoleSelection:      {Stroke: black, Fill: none, Width: 1, Dash: []float64{1, 1}},
		RoleTitle:          {Fill: black},
		RoleFrame:          {Stroke: mid, Width: 0.6},
	}
	return t
}

// PresentationTheme is t with larger type and nodes, for showing a tree to a room.
func PresentationTheme(t Theme) Theme {
	const k = 1.5
	t.Name += "-presentation"
	t.LabelSize *= k
	t.NumberSize *= k
	t.ValueSize *= k
	t.NoteSize *= k
	t.TitleSize *= k
	t.NodeSize *= k
	t.EndWidth *= k
	t.EndHeight *= k
	t.MinBranch *= k
	t.FanWidth *= k
	t.StubLength *= k
	t.TextPad *= k
	t.SiblingGap *= k
	t.SubtreeGap *= k
	t.MaxLabelWidth *= k
	t.MaxNoteWidth *= k
	for i := range t.styles {
		t.styles[i].Width *= 1.3
	}
	return t
}

// ThemeNames lists the names ThemeByName accepts.
var ThemeNames = []string{"light", "dark", "print"}

// ThemeByName returns a theme by name ("light", "dark", "print"; a
// "-presentation" suffix gives the larger variant). ok is false for unknown names.
func ThemeByName(name string) (Theme, bool) {
	base, pres := strings.CutSuffix(strings.ToLower(strings.TrimSpace(name)), "-presentation")
	var t Theme
	switch base {
	case "light", "":
		t = LightTheme()
	case "dark":
		t = DarkTheme()
	case "print":
		t = PrintTheme()
	default:
		return LightTheme(), false
	}
	if pres {
		t = PresentationTheme(t)
	}
	return t, true
}

func (t *Theme) lineHeight(size float64) float64 { return size * t.LineSpacing }
