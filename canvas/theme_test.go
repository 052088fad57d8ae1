package canvas

import (
	"image/color"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

func TestThemes(t *testing.T) {
	textRoles := []Role{RoleLabel, RoleProbability, RoleCash, RoleValue, RolePayoff, RoleMutedText, RoleNote, RoleProblem, RoleTitle}
	for _, name := range []string{"light", "dark", "print", "light-presentation", "print-presentation"} {
		t.Run(name, func(t *testing.T) {
			th, ok := ThemeByName(name)
			require.True(t, ok)
			for _, r := range textRoles {
				assert.NotZero(t, th.Style(r).Fill.A, "text role %d must have a colour", r)
			}
			for _, r := range []Role{RoleBranch, RoleBranchPolicy, RoleBranchRejected, RoleDecisionNode, RoleChanceNode, RoleEndNode} {
				assert.Positive(t, th.Style(r).Width)
				assert.NotZero(t, th.Style(r).Stroke.A)
			}
			// the recommended path is never marked by colour alone
			assert.GreaterOrEqual(t, th.Style(RoleBranchPolicy).Width, 2*th.Style(RoleBranch).Width)
		})
	}
	_, ok := ThemeByName("neon")
	assert.False(t, ok)
	pres, _ := ThemeByName("light-presentation")
	assert.Greater(t, pres.LabelSize, LightTheme().LabelSize)
}

// luma is the Rec. 601 luma of a colour, 0–255.
func luma(c color.NRGBA) float64 { return 0.299*float64(c.R) + 0.587*float64(c.G) + 0.114*float64(c.B) }

func TestPrintThemeWorksInGreyscale(t *testing.T) {
	th := PrintTheme()
	for r := Role(0); r < roleCount; r++ {
		st := th.Style(r)
		for _, c := range []color.NRGBA{st.Stroke, st.Fill} {
			if c.A > 0 && r != RoleSelection {
				assert.True(t, c.R == c.G && c.G == c.B, "print role %d uses only greys", r)
			}
		}
	}
	assert.NotEmpty(t, th.Style(RoleBranchRejected).Dash, "rejected alternatives are dashed")
	assert.Greater(t, luma(th.Style(RoleBranchRejected).Stroke), luma(th.Style(RoleBranchPolicy).Stroke), "and lighter")
	assert.Greater(t, luma(th.Style(RoleMutedText).Fill), luma(th.Style(RoleLabel).Fill))
}

func TestNotesBesideProbabilities(t *testing.T) {
	p, r := smallTree(t)
	works := p.Root.Branches[0].To.Branches[0].To
	opts := DefaultOptions()
	opts.Notes = map[*engine.Node][]string{works: {"choice flips at 0.42"}}
	opts.NoteFunc = func(n *engine.Node, i int) []string {
		if n.Kind == engine.Chance && i == 1 {
			return []string{"break-even 0.35"}
		}
		return nil
	}
	plain := LayoutTree(p, r, FontMeasurer{}, DefaultOptions())
	l := LayoutTree(p, r, FontMeasurer{}, opts)
	s := Build(p, r, l, opts, Rect{})
	var notes []string
	for _, pr := range s.Prims {
		if pr.Role == RoleNote {
			notes = append(notes, pr.Text)
		}
	}
	assert.ElementsMatch(t, []string{"choice flips at 0.42", "break-even 0.35"}, notes)
	i := l.Index(works)
	assert.Greater(t, l.Boxes[i].Bottom, plain.Boxes[plain.Index(works)].Bottom, "room is made for the note")
	checkNoOverlap(t, l, 0)

	// the layouter notices when notes change between layouts
	lo := NewLayouter(FontMeasurer{})
	lo.Layout(p, r, opts)
	opts.Notes[works] = []string{"choice flips at 0.40"}
	l2 := lo.Layout(p, r, opts)
	require.Len(t, l2.Boxes[l2.Index(works)].Notes, 1)
	assert.Equal(t, "choice flips at 0.40", l2.Boxes[l2.Index(works)].Notes[0].Text)
}

func TestLayouterUpdatesChangedTexts(t *testing.T) {
	p, r := smallTree(t)
	lo := NewLayouter(FontMeasurer{})
	opts := DefaultOptions()
	lo.Layout(p, r, opts)
	p.Root.Branches[0].Label = "Try harder"
	p.Root.Branches[1].To.Payoff = "25"
	p.Decimals = 2
	r = engine.Evaluate(p)
	l := lo.Layout(p, r, opts)
	fresh := LayoutTree(p, r, FontMeasurer{}, opts)
	require.Len(t, l.Boxes, len(fresh.Boxes))
	for i := range l.Boxes {
		assert.Equal(t, *fresh.Boxes[i].NodeTexts, *l.Boxes[i].NodeTexts, "box %d: cached texts equal a fresh layout", i)
		assert.InDelta(t, fresh.Boxes[i].Y, l.Boxes[i].Y, 1e-9)
	}
	assert.Equal(t, "Try harder", l.Boxes[l.Index(p.Root.Branches[0].To)].Label.Text)
	assert.Equal(t, r.Format(r.PathValue(p.Root.Branches[1].To)), l.Boxes[l.Index(p.Root.Branches[1].To)].Payoff.Text)
}

// The cached measurer must agree with gonum/plot's own font.Face.Width, which
// is what the PDF and PNG back-ends lay text out with.
func TestFontMeasurerMatchesGonum(t *testing.T) {
	texts := []string{"Rent a temporary chiller", "−1,234,567.89 EUR", "AVAWAY To Ty", "Zürich – €5", "東京 🚢", "0.35", "", "ﬁ ligature"}
	for _, s := range texts {
		for _, bold := range []bool{false, true} {
			for _, size := range []float64{7.5, 10, 15} {
				face := fileFace(size, bold)
				want := float64(face.Width(s).Points())
				assert.InDelta(t, want, FontMeasurer{}.TextWidth(s, size, bold), 1e-9, "%q bold=%v size=%v", s, bold, size)
			}
		}
	}
}
